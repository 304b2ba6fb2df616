/**
 * Thread that hashes and checks passwords with bcryptjs (started by passwords.ts), so the seconds of CPU a
 * burst of sign-ins costs never run on the web server's event loop. Stateless.
 */
import bcrypt from 'bcryptjs';

export type PasswordTask = { op: 'hash'; password: string; rounds: number } | { op: 'verify'; password: string; hash: string };

export default function passwordTask(task: PasswordTask): string | boolean {
  return task.op === 'hash' ? bcrypt.hashSync(task.password, task.rounds) : bcrypt.compareSync(task.password, task.hash);
}
