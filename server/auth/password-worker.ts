/**
 * Thread that hashes and checks passwords with bcryptjs (started by passwords.ts), so the seconds of CPU a
 * burst of sign-ins costs never run on the web server's event loop. Stateless.
 */
import os from 'node:os';
import bcrypt from 'bcryptjs';

// On Linux, setpriority(PRIO_PROCESS, 0) applies to the calling thread only: this thread's hashing yields the CPU to
// the thread that answers HTTP requests (as the run pool's threads do). Elsewhere it may lower the whole process
// or be refused; both are fine.
if (process.platform === 'linux') {
  try {
    os.setPriority(Math.min(19, os.getPriority() + 5));
  } catch {
    /* not permitted: keep the default priority */
  }
}

export type PasswordTask = { op: 'hash'; password: string; rounds: number } | { op: 'verify'; password: string; hash: string };

export default function passwordTask(task: PasswordTask): string | boolean {
  return task.op === 'hash' ? bcrypt.hashSync(task.password, task.rounds) : bcrypt.compareSync(task.password, task.hash);
}
