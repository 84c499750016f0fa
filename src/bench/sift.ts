// Benchmark of `sift` end to end on 10,000 generated structures shaped like a real search (1,000 distinct packings
// of one molecule, each found 10 times, mostly as noisy P1 cells and supercells; see _search-landscape.ts), on
// 2 threads, beside the reference script on the same files (see _sift-bench.ts). Goals: under 20 s wall, read +
// invariants + duplicates at least 5x faster than the reference, peak memory under 2 GB, one exact EMD at least
// as fast as POT. POLYSIFT_BENCH_PACKINGS changes the size; POLYSIFT_BENCH_REFERENCE=0 skips the reference script.
import { siftBench } from './_sift-bench.js';

export async function run(): Promise<void> {
  const packings = Number(process.env.POLYSIFT_BENCH_PACKINGS ?? 1000);
  await siftBench(packings, { goalSeconds: 20, goalMb: 2048, reference: process.env.POLYSIFT_BENCH_REFERENCE !== '0' });
}
