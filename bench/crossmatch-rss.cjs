// Preload for the benchmark's CLI runs: on exit, writes the process's peak resident set (KiB) and
// its CPU time (user + system, microseconds) as JSON to the file named by PECULIAR_BENCH_RSS.
// Loaded with `node --require ./bench/crossmatch-rss.cjs`.
const { writeFileSync } = require("node:fs");
process.on("exit", () => {
  const f = process.env.PECULIAR_BENCH_RSS;
  if (!f) return;
  const u = process.resourceUsage();
  writeFileSync(f, JSON.stringify({ maxRssKiB: u.maxRSS, cpuMicros: u.userCPUTime + u.systemCPUTime }));
});
