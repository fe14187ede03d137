// Small helper for benchmarks: best-of-N wall time with a warm-up run.
export function timeBest<T>(label: string, runs: number, fn: () => T): { label: string; ms: number; result: T } {
  let result = fn();
  let best = Number.POSITIVE_INFINITY;
  for (let i = 0; i < runs; i++) {
    const start = process.hrtime.bigint();
    result = fn();
    const ms = Number(process.hrtime.bigint() - start) / 1e6;
    if (ms < best) best = ms;
  }
  console.log(`${label}: ${best.toFixed(1)} ms (best of ${runs})`);
  return { label, ms: best, result };
}

export async function timeBestAsync<T>(label: string, runs: number, fn: () => Promise<T>): Promise<{ label: string; ms: number; result: T }> {
  let result = await fn();
  let best = Number.POSITIVE_INFINITY;
  for (let i = 0; i < runs; i++) {
    const start = process.hrtime.bigint();
    result = await fn();
    const ms = Number(process.hrtime.bigint() - start) / 1e6;
    if (ms < best) best = ms;
  }
  console.log(`${label}: ${best.toFixed(1)} ms (best of ${runs})`);
  return { label, ms: best, result };
}
