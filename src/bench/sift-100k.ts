// Benchmark of `sift` at scale: 100,000 generated structures (10,000 distinct packings found 10 times each; see
// _search-landscape.ts), as `sift` but ten times larger. Goals: under 5 minutes wall on 2 threads, peak memory under
// 8 GB. Generating the landscape takes several minutes once (kept in the system's temporary folder); the reference
// script runs too unless POLYSIFT_BENCH_REFERENCE=0. Not part of a plain `npm run bench`: run `npm run bench sift-100k`.
import { siftBench } from './_sift-bench.js';

export async function run(): Promise<void> {
  await siftBench(10000, { goalSeconds: 300, goalMb: 8192, reference: process.env.POLYSIFT_BENCH_REFERENCE !== '0' });
}
