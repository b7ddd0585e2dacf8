/**
 * Benchmark helper: where a machine's CPU time went during a run, from
 * Linux's /proc — each worker process with its busiest thread (a worker's
 * chunk thread), every process named `postgres` on the machine (the
 * bench's throw-away server; those ended included, through their parent's
 * count — another PostgreSQL server running meanwhile would be counted
 * too), this bench process, and the machine's
 * idle time, time waiting on the disk and time the host took for others
 * (steal), in core-seconds. On a machine without /proc the snapshot is
 * null and nothing is printed. Not a suite (bench/index.ts runs only the
 * files in bench/suites/).
 */
import { readFileSync, readdirSync } from "node:fs";

/** Linux's clock ticks per second for /proc times (USER_HZ, 100 on every common architecture). */
const TICKS = 100;

export interface CpuSnapshot {
  /** /proc/stat's first line: user, nice, system, idle, iowait, irq, softirq, steal (ticks) */
  machine: number[];
  /** per worker process: its own ticks and each thread's */
  workers: { pid: number; ticks: number; threads: Map<number, number> }[];
  /** the ticks of every process named postgres, those ended and reaped by their parent included */
  database: number;
  /** this process's CPU, user and system (µs) */
  self: NodeJS.CpuUsage;
}

/** The fields of /proc/<pid>/stat after the command (which may hold spaces), or null when gone. */
function statFields(path: string): { comm: string; fields: string[] } | null {
  try {
    const text = readFileSync(path, "utf8");
    const open = text.indexOf("(");
    const close = text.lastIndexOf(")");
    return { comm: text.slice(open + 1, close), fields: text.slice(close + 2).split(" ") };
  } catch {
    return null;
  }
}

// After the command: state is field 0, utime 11, stime 12, cutime 13, cstime 14.
const own = (fields: string[]) => Number(fields[11]) + Number(fields[12]);
const children = (fields: string[]) => Number(fields[13]) + Number(fields[14]);

/** A snapshot of the CPU time so far (see the module note); null without /proc. */
export function cpuSnapshot(workerPids: readonly number[]): CpuSnapshot | null {
  let machine: number[];
  try {
    const line = readFileSync("/proc/stat", "utf8").split("\n")[0];
    machine = line.trim().split(/\s+/).slice(1, 9).map(Number);
  } catch {
    return null;
  }
  const workers = workerPids.map((pid) => {
    const threads = new Map<number, number>();
    let tids: string[] = [];
    try {
      tids = readdirSync(`/proc/${pid}/task`);
    } catch {
      // the process has ended
    }
    for (const tid of tids) {
      const stat = statFields(`/proc/${pid}/task/${tid}/stat`);
      if (stat) threads.set(Number(tid), own(stat.fields));
    }
    const stat = statFields(`/proc/${pid}/stat`);
    return { pid, ticks: stat ? own(stat.fields) : 0, threads };
  });
  let database = 0;
  for (const entry of readdirSync("/proc")) {
    if (!/^\d+$/.test(entry)) continue;
    const stat = statFields(`/proc/${entry}/stat`);
    if (stat?.comm === "postgres") database += own(stat.fields) + children(stat.fields);
  }
  return { machine, workers, database, self: process.cpuUsage() };
}

/** One line: where the CPU time between two snapshots went, in core-seconds. */
export function cpuAccount(before: CpuSnapshot | null, after: CpuSnapshot | null): string | null {
  if (!before || !after) return null;
  const s = (ticks: number) => (ticks / TICKS).toFixed(1);
  const d = after.machine.map((v, k) => v - (before.machine[k] ?? 0));
  const [user, nice, system, idle, iowait, irq, softirq, steal] = d;
  const busy = user + nice + system + irq + softirq;
  const workers = after.workers.map((w) => {
    const was = before.workers.find((b) => b.pid === w.pid);
    const threads = [...w.threads].map(([tid, t]) => t - (was?.threads.get(tid) ?? 0));
    threads.sort((a, b) => b - a);
    return `${s(w.ticks - (was?.ticks ?? 0))} (busiest thread ${s(threads[0] ?? 0)}, next ${s(threads[1] ?? 0)})`;
  });
  const self = (after.self.user + after.self.system - before.self.user - before.self.system) / 1e6;
  return `CPU during the run, core-seconds: busy ${s(busy)} — worker processes ${workers.length > 0 ? workers.join(", ") : "none"}; PostgreSQL ${s(after.database - before.database)}; this bench process ${self.toFixed(1)} — idle ${s(idle)}, waiting on the disk ${s(iowait)}, taken by the host ${s(steal)}`;
}
