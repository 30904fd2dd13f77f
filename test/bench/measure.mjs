// Preloaded into every timed process (node --import): at exit, write the process's own resource use
// (getrusage: peak resident memory and CPU time of all its threads) to the file named by
// TIDEMARK_BENCH_USAGE, for the benchmark to read.
import { writeFileSync } from 'node:fs';

const file = process.env.TIDEMARK_BENCH_USAGE;
if (file) {
  process.on('exit', () => {
    const u = process.resourceUsage();
    writeFileSync(file, JSON.stringify({ maxRssBytes: u.maxRSS * 1024, cpuSeconds: (u.userCPUTime + u.systemCPUTime) / 1e6 }));
  });
}
