/**
 * CPU lists in the Linux list format (cpuset(7), "List format"): numbers and ranges separated by
 * commas, "0-3,8". Used for PLATEN_WORKER_CPUS (worker/cpu-affinity.ts) and by the launcher.
 */

/** Largest CPU number accepted in a list (Linux's default NR_CPUS ceiling is far above real machines). */
const MAX_CPU = 4095;

/**
 * The CPUs of a list, ascending and without repeats. Throws a plain Error saying what is wrong.
 * Examples: parseCpuList("0-2,5") → [0, 1, 2, 5]; parseCpuList("3") → [3].
 */
export function parseCpuList(text: string): number[] {
  const spec = text.trim();
  if (!/^\d+(-\d+)?(,\d+(-\d+)?)*$/.test(spec)) {
    throw new Error(`Expected a CPU list such as "0", "0-3" or "0,2-3" but received ${JSON.stringify(text)}`);
  }
  const cpus = new Set<number>();
  for (const part of spec.split(",")) {
    const [lo, hi] = part.split("-").map(Number);
    const a = lo!;
    const b = hi ?? a;
    if (b < a) throw new Error(`Expected a CPU range from low to high but received "${part}"`);
    if (b > MAX_CPU) throw new Error(`Expected CPU numbers up to ${MAX_CPU} but received "${part}"`);
    for (let c = a; c <= b; c++) cpus.add(c);
  }
  return [...cpus].sort((x, y) => x - y);
}

/** A list of CPUs in the list format, ranges folded: [0, 1, 2, 5] → "0-2,5". */
export function formatCpuList(cpus: number[]): string {
  const sorted = [...new Set(cpus)].sort((a, b) => a - b);
  const parts: string[] = [];
  for (let i = 0; i < sorted.length;) {
    let j = i;
    while (j + 1 < sorted.length && sorted[j + 1] === sorted[j]! + 1) j++;
    parts.push(i === j ? String(sorted[i]) : `${sorted[i]}-${sorted[j]}`);
    i = j + 1;
  }
  return parts.join(",");
}

/**
 * How `workers` worker processes on one machine share its CPUs: the CPUs split into runs of
 * neighbours as equal as they can be, one run each (the first workers take one more when they do
 * not divide evenly, so no CPU is left idle); null when there is one worker, or more workers than
 * CPUs (then they are best left free). Examples: 2 workers on [0, 1, 2, 3] → ["0-1", "2-3"];
 * 3 on [0 … 7] → ["0-2", "3-5", "6-7"].
 */
export function cpuShares(workers: number, cpus: number[]): string[] | null {
  if (workers <= 1 || workers > cpus.length) return null;
  const each = Math.floor(cpus.length / workers);
  const extra = cpus.length % workers;
  const start = (i: number) => i * each + Math.min(i, extra);
  return Array.from({ length: workers }, (_, i) => formatCpuList(cpus.slice(start(i), start(i + 1))));
}
