/**
 * PLATEN_WORKER_CPUS: CPU lists in the Linux list format (cpuset(7), "List format": decimal
 * numbers and ranges "a-b" separated by commas) and how the launcher shares a machine's CPUs
 * between its workers. The hold itself is checked on real worker processes in
 * two-worker-processes-run-every-job-exactly-once and here on a process of the test's own.
 */
import { spawn } from "node:child_process";
import fs from "node:fs";
import os from "node:os";
import { describe, expect, it } from "vitest";
import { cpuShares, formatCpuList, parseCpuList } from "../shared/cpu-list";
import { allowedCpus, holdToCpus, threadCpus } from "../worker/cpu-affinity";
import { overrideConfig } from "../server/config";

describe("CPU lists", () => {
  it("read numbers and ranges as cpuset(7) writes them", () => {
    expect(parseCpuList("0")).toEqual([0]);
    expect(parseCpuList("0-3")).toEqual([0, 1, 2, 3]);
    // The example of cpuset(7): "0-4,9" and "0-2,7,12-14".
    expect(parseCpuList("0-4,9")).toEqual([0, 1, 2, 3, 4, 9]);
    expect(parseCpuList("0-2,7,12-14")).toEqual([0, 1, 2, 7, 12, 13, 14]);
    expect(parseCpuList(" 5,1,1-2 ")).toEqual([1, 2, 5]);
  });

  it("write lists folded into ranges, and read back what they write", () => {
    expect(formatCpuList([0, 1, 2, 7, 12, 13, 14])).toBe("0-2,7,12-14");
    expect(formatCpuList([3, 1, 2, 2])).toBe("1-3");
    expect(formatCpuList([4])).toBe("4");
    for (const list of ["0", "0-1", "2-3", "0,2,4", "1-2,5-9,11"]) expect(formatCpuList(parseCpuList(list))).toBe(list);
  });

  it("refuse what is not a list, with the reason", () => {
    expect(() => parseCpuList("")).toThrow(/Expected a CPU list such as "0", "0-3" or "0,2-3" but received ""/);
    expect(() => parseCpuList("one")).toThrow(/but received "one"/);
    expect(() => parseCpuList("0-")).toThrow(/but received "0-"/);
    expect(() => parseCpuList("-1")).toThrow(/but received "-1"/);
    expect(() => parseCpuList("3-1")).toThrow('Expected a CPU range from low to high but received "3-1"');
    expect(() => parseCpuList("0-99999")).toThrow('Expected CPU numbers up to 4095 but received "0-99999"');
  });

  it("are checked where the worker's settings are read", () => {
    expect(overrideConfig({ PLATEN_WORKER_CPUS: "0-1" }).workerCpus).toEqual([0, 1]);
    expect(overrideConfig({ PLATEN_WORKER_CPUS: "" }).workerCpus).toBeNull();
    expect(overrideConfig({}).workerCpus).toBeNull();
    expect(() => overrideConfig({ PLATEN_WORKER_CPUS: "first" })).toThrow(/PLATEN_WORKER_CPUS.*Expected a CPU list/s);
  });
});

describe("sharing a machine's CPUs between its workers", () => {
  it("gives each worker a run of neighbouring CPUs, as equal as they divide, leaving none idle", () => {
    expect(cpuShares(2, [0, 1])).toEqual(["0", "1"]);
    expect(cpuShares(2, [0, 1, 2, 3])).toEqual(["0-1", "2-3"]);
    expect(cpuShares(3, [0, 1, 2, 3, 4, 5, 6, 7])).toEqual(["0-2", "3-5", "6-7"]); // 8 = 3 + 3 + 2
    expect(cpuShares(3, [0, 1, 2])).toEqual(["0", "1", "2"]);
    expect(cpuShares(2, [2, 3, 6, 7])).toEqual(["2-3", "6-7"]); // only the CPUs this process may use
  });

  it("leaves one worker, or more workers than CPUs, free", () => {
    expect(cpuShares(1, [0, 1, 2, 3])).toBeNull();
    expect(cpuShares(3, [0, 1])).toBeNull();
  });
});

describe("holding a process to CPUs", () => {
  it("holds every thread, and the threads it starts later, to the CPU given", async () => {
    const cpus = allowedCpus()!;
    const target = cpus.at(-1)!;
    // A process that starts worker threads a moment after it is held.
    const child = spawn(
      process.execPath,
      [
        "-e",
        "setTimeout(() => { const { Worker } = require('node:worker_threads'); for (let i = 0; i < 3; i++) new Worker('setInterval(() => {}, 1000)', { eval: true }); console.log('started'); }, 300); setInterval(() => {}, 1000);",
      ],
      { stdio: ["ignore", "pipe", "ignore"] },
    );
    try {
      await new Promise((r) => setTimeout(r, 100));
      holdToCpus([target], child.pid!);
      await new Promise<void>((resolve) => child.stdout!.on("data", (d: Buffer) => d.toString().includes("started") && resolve()));
      await new Promise((r) => setTimeout(r, 200));
      const threads = threadCpus(child.pid!);
      expect(threads.length).toBeGreaterThan(7); // Node's own threads and the three workers
      expect(threads.filter((t) => t.cpus.join() !== String(target))).toEqual([]);
    } finally {
      child.kill("SIGKILL");
    }
  });

  it("refuses a CPU the process may not use, saying which ones it may", () => {
    const cpus = allowedCpus()!;
    const beyond = Math.max(...cpus, os.cpus().length) + 1;
    expect(() => holdToCpus([beyond])).toThrow(
      new RegExp(`^Cannot hold the worker to CPU ${beyond}: this process may run on CPUs ${formatCpuList(cpus)} only$`),
    );
    expect(allowedCpus()).toEqual(cpus); // this process is left as it was
  });

  it("reads the CPUs this process may use from /proc", () => {
    const line = /^Cpus_allowed_list:\s*(.+)$/m.exec(fs.readFileSync("/proc/self/status", "utf8"))![1]!;
    expect(formatCpuList(allowedCpus()!)).toBe(line.trim());
  });
});
