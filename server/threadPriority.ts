// Analyses are batch work: on a machine with few cores they must not take the CPU from the
// request thread and PostgreSQL (docs/server.md, "Analyses at low priority").
import { readlinkSync } from 'node:fs';
import { getPriority, setPriority } from 'node:os';

/**
 * Gives the calling thread the nice value `nice` (0 to 19; 0 changes nothing) and returns the
 * nice value it now has, or null where that is not possible. Only on Linux, where the nice value belongs to a thread
 * (setpriority(2), "BUGS"): elsewhere it belongs to the whole process, and lowering it from a
 * worker thread would slow the request thread as well. The thread is named by its id from
 * /proc/thread-self, since the process id would lower the process's first thread instead.
 */
export function lowerThreadPriority(nice: number): number | null {
  if (process.platform !== 'linux' || !(nice > 0 && nice <= 19)) return null;
  try {
    const tid = Number(readlinkSync('/proc/thread-self').split('/').pop());
    if (!Number.isInteger(tid) || tid <= 0) return null;
    setPriority(tid, nice);
    return getPriority(tid);
  } catch {
    return null; // a sandbox without /proc, or a refused call: the work runs as before
  }
}
