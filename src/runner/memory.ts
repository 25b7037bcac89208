/**
 * Peak memory while a job runs. The figure is the whole process's resident set size
 * (RSS), not the matcher's own allocations: it includes the loaded pair, the runtime
 * and anything else alive in the process.
 *
 * RSS is sampled before, every few milliseconds during (only while the event loop
 * turns, i.e. for asynchronous matchers) and after the match. A synchronous matcher
 * blocks the sampling, so the process's lifetime maximum RSS
 * (process.resourceUsage().maxRSS) is read too: if it grew during the job, the new
 * maximum was reached during the job and is taken.
 */

const MB = 1024 * 1024;

export interface PeakSampler {
  /** Stop sampling; the peak RSS during the job in MB (2^20 bytes). */
  stop(): number;
}

export function startPeakSampler(intervalMs = 5): PeakSampler {
  const maxRssBefore = process.resourceUsage().maxRSS * 1024;
  let peak = process.memoryUsage.rss();
  const timer = setInterval(() => {
    const r = process.memoryUsage.rss();
    if (r > peak) peak = r;
  }, intervalMs);
  timer.unref();
  return {
    stop(): number {
      clearInterval(timer);
      const r = process.memoryUsage.rss();
      if (r > peak) peak = r;
      const maxRssAfter = process.resourceUsage().maxRSS * 1024;
      if (maxRssAfter > maxRssBefore && maxRssAfter > peak) peak = maxRssAfter;
      return Math.round((peak / MB) * 10) / 10;
    },
  };
}
