// Analyses and planning jobs are batch work: on a machine with few cores they must not take the
// CPU from the request thread and PostgreSQL (docs/server.md, "Analyses at low priority").
import { readlinkSync } from 'node:fs';
import { constants, getPriority, setPriority } from 'node:os';

/**
 * Gives the calling thread the lowest CPU priority (nice 19) and returns the nice value it now
 * has, or null where that is not possible. Only on Linux, where the nice value belongs to a thread
 * (setpriority(2), "BUGS"): elsewhere it belongs to the whole process, and lowering it from a
 * worker thread would slow the request thread as well. The thread is named by its id from
 * /proc/thread-self, since the process id would lower the process's first thread instead.
 */
export function lowerThreadPriority(): number | null {
  if (process.platform !== 'linux') return null;
  try {
    const tid = Number(readlinkSync('/proc/thread-self').split('/').pop());
    if (!Number.isInteger(tid) || tid <= 0) return null;
    setPriority(tid, constants.priority.PRIORITY_LOW);
    return getPriority(tid);
  } catch {
    return null; // a sandbox without /proc, or a refused call: the work runs as before
  }
}
