/**
 * Holding a worker process to some of the machine's CPUs (PLATEN_WORKER_CPUS), for several
 * workers on one machine. A worker's job keeps more than one thread busy (libvips writes a file on
 * a thread of its own beside the one computing its pixels, and Node has its own), and when two
 * workers' threads are free to run anywhere they keep moving between the cores. Measured here on
 * 2 cores (`npm run bench`, batch): two workers each held to a core made 16.35 outputs/s against
 * 14.75 left free (medians of 3 rounds, 2026-12-02). A worker alone on a machine is best left
 * free: held to one core it made 8.72/s, free 10.94.
 *
 * CPU lists use the Linux list format (cpuset(7), "List format"): numbers and ranges separated by
 * commas, "0-3,8". The hold is set with taskset from util-linux (`taskset -a -p -c`: every thread
 * of the process; threads started later inherit it from the thread that starts them).
 */
import { spawnSync } from "node:child_process";
import fs from "node:fs";
import os from "node:os";
import { formatCpuList, parseCpuList } from "../shared/cpu-list";

/** The CPUs a process may run on (Cpus_allowed_list in /proc/<pid>/status, proc(5)); null off Linux. */
export function allowedCpus(pid: number | "self" = "self"): number[] | null {
  try {
    const status = fs.readFileSync(`/proc/${pid}/status`, "utf8");
    const line = /^Cpus_allowed_list:\s*(.+)$/m.exec(status);
    return line ? parseCpuList(line[1]!) : null;
  } catch {
    return null;
  }
}

/** Each thread of a process with the CPUs it may run on (/proc/<pid>/task/<tid>/status). */
export function threadCpus(pid: number): { tid: number; name: string; cpus: number[] }[] {
  const out: { tid: number; name: string; cpus: number[] }[] = [];
  for (const tid of fs.readdirSync(`/proc/${pid}/task`)) {
    try {
      const status = fs.readFileSync(`/proc/${pid}/task/${tid}/status`, "utf8");
      out.push({
        tid: Number(tid),
        name: /^Name:\s*(.*)$/m.exec(status)?.[1] ?? "",
        cpus: parseCpuList(/^Cpus_allowed_list:\s*(.+)$/m.exec(status)![1]!),
      });
    } catch {
      // the thread ended while being read
    }
  }
  return out;
}

export const TASKSET = "/usr/bin/taskset";

/**
 * Holds every thread of process `pid` (this one by default) to `cpus`. Throws a plain Error with
 * the reason when a CPU is not this machine's (or not allowed to the process) or taskset fails.
 */
export function holdToCpus(cpus: number[], pid = process.pid): void {
  const allowed = allowedCpus(pid) ?? Array.from({ length: os.cpus().length }, (_, i) => i);
  const missing = cpus.filter((c) => !allowed.includes(c));
  if (missing.length > 0) {
    throw new Error(`Cannot hold the worker to CPU ${formatCpuList(missing)}: this process may run on CPUs ${formatCpuList(allowed)} only`);
  }
  if (!fs.existsSync(TASKSET)) throw new Error(`Cannot hold the worker to CPUs ${formatCpuList(cpus)}: ${TASKSET} (util-linux) is missing`);
  const r = spawnSync(TASKSET, ["-a", "-p", "-c", formatCpuList(cpus), String(pid)], { encoding: "utf8" });
  if (r.status !== 0) {
    throw new Error(
      `Cannot hold the worker to CPUs ${formatCpuList(cpus)}: taskset said ${(r.stderr || r.error?.message || `exit ${r.status}`).trim()}`,
    );
  }
}
