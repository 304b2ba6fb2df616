/**
 * Thread that reads a study's grid index (server/compare/grid-index.ts `readGridData`) from its own read-only
 * connection to the database file, so the seconds a million cells take never block the web server's event
 * loop; the typed arrays are transferred back, not copied. SQLite in WAL mode lets this reader run beside the
 * server's writes; it sees what was committed when it starts.
 * Only static imports in this graph: under `--import tsx` the thread loads it through the CommonJS hook.
 */
import os from 'node:os';
import Database from 'better-sqlite3';
import { Piscina } from 'piscina';
import { gridDataBuffers, readGridData } from './grid-index.js';
import type { ResolvedSource } from './source.js';

// On Linux, setpriority(PRIO_PROCESS, 0) applies to the calling thread only: this thread's reading yields the CPU to
// the thread that answers HTTP requests (as the run pool's threads do). Elsewhere it may lower the whole process
// or be refused; both are fine.
if (process.platform === 'linux') {
  try {
    os.setPriority(Math.min(19, os.getPriority() + 5));
  } catch {
    /* not permitted: keep the default priority */
  }
}

export interface GridIndexTask {
  file: string;
  studyId: number;
  src: ResolvedSource;
}

const connections = new Map<string, Database.Database>();

export default function gridIndexTask(task: GridIndexTask): unknown {
  let db = connections.get(task.file);
  if (!db) {
    db = new Database(task.file, { readonly: true, fileMustExist: true });
    db.pragma('busy_timeout = 5000');
    connections.set(task.file, db);
  }
  const data = readGridData(db, task.studyId, task.src);
  const buffers = gridDataBuffers(data);
  return Piscina.move({
    get [Piscina.transferableSymbol]() {
      return buffers;
    },
    get [Piscina.valueSymbol]() {
      return data;
    },
  } as never);
}
