/** A small seeded PRNG (mulberry32) so that parcel i and position j are the same on every run. */
export function seededRandom(seed: number): () => number {
  let a = seed >>> 0;
  return () => {
    a = (a + 0x6d2b79f5) >>> 0;
    let t = a;
    t = Math.imul(t ^ (t >>> 15), t | 1);
    t ^= t + Math.imul(t ^ (t >>> 7), t | 61);
    return ((t ^ (t >>> 14)) >>> 0) / 4294967296;
  };
}

export const between = (random: () => number, low: number, high: number) => low + (high - low) * random();
export const integerBetween = (random: () => number, low: number, high: number) => Math.floor(between(random, low, high + 1));

export type Latencies = { count: number; p50: number; p95: number; p99: number; mean: number; max: number };

/** Nearest-rank percentiles of latencies in milliseconds. */
export function summarise(samples: number[]): Latencies {
  const sorted = [...samples].sort((a, b) => a - b);
  const rank = (p: number) => sorted[Math.min(sorted.length - 1, Math.max(0, Math.ceil((p / 100) * sorted.length) - 1))] ?? Number.NaN;
  const mean = sorted.reduce((sum, x) => sum + x, 0) / Math.max(1, sorted.length);
  return { count: sorted.length, p50: rank(50), p95: rank(95), p99: rank(99), mean, max: sorted[sorted.length - 1] ?? Number.NaN };
}

/**
 * Runs `task` from `concurrency` loops (numbered from 0, passed to the task) until `count` tasks have started or `maxMs` has passed,
 * and times each one. Answers the latencies (ms), the wall time and how many failed.
 */
export async function runConcurrently<T>(
  items: readonly T[],
  { concurrency, count, maxMs }: { concurrency: number; count: number; maxMs: number },
  task: (item: T, worker: number) => Promise<void>,
): Promise<{ latencies: number[]; wallMs: number; failures: number; firstError: string | null }> {
  const latencies: number[] = [];
  let next = 0;
  let failures = 0;
  let firstError: string | null = null;
  const started = performance.now();
  const deadline = started + maxMs;
  const loop = async (_: unknown, worker: number) => {
    while (next < count && performance.now() < deadline) {
      const item = items[next % items.length] as T;
      next += 1;
      const t0 = performance.now();
      try {
        await task(item, worker);
        latencies.push(performance.now() - t0);
      } catch (error) {
        failures += 1;
        firstError ??= error instanceof Error ? error.message : String(error);
      }
    }
  };
  await Promise.all(Array.from({ length: concurrency }, loop));
  return { latencies, wallMs: performance.now() - started, failures, firstError };
}
