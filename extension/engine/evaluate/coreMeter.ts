/**
 * How many cores other programs kept busy over a span of our own work: the machine's busy time
 * (from the kernel's per-core counters) minus this process's CPU time, over the elapsed time.
 *
 * The 1-minute load average answers a different question: it trails by a minute and counts this
 * process's own earlier threads, so right after one large read it reported both cores busy and
 * the scoring that followed ran on one thread with the second core idle. Measuring the span that
 * just ended (a large read takes a second or more) sees what the other programs are doing now.
 */
import { availableParallelism, cpus, loadavg } from 'node:os';

export interface CoreSample {
  /** Busy milliseconds summed over every core. */
  readonly busyMs: number;
  /** This process's CPU milliseconds, all threads. */
  readonly ownMs: number;
  readonly atMs: number;
}

/** Spans shorter than this fall back to the load average: the kernel counters tick every 10 ms. */
const SHORTEST_SPAN_MS = 250;

/** The real counters. */
export function sampleCores(): CoreSample {
  let busyMs = 0;
  for (const core of cpus()) busyMs += core.times.user + core.times.nice + core.times.sys + core.times.irq;
  const own = process.cpuUsage();
  return { busyMs, ownMs: (own.user + own.system) / 1000, atMs: performance.now() };
}

export class CoreMeter {
  private readonly start: CoreSample;

  constructor(private readonly sample: () => CoreSample = sampleCores, private readonly loadAverage = () => loadavg()[0]!) {
    this.start = sample();
  }

  /** Cores busy with other programs since the meter started (0 or more; the load average for short spans). */
  otherBusyCores(): number {
    const end = this.sample();
    const span = end.atMs - this.start.atMs;
    if (span < SHORTEST_SPAN_MS) return this.loadAverage();
    const others = end.busyMs - this.start.busyMs - (end.ownMs - this.start.ownMs);
    return Math.max(0, others / span);
  }
}

/**
 * Whole cores left for our own threads when other programs keep `otherBusyCores` busy (rounded to the
 * nearest core; 0 or more). One rule for the scoring threads of a dump and the lanes of a series.
 */
export function freeCores(otherBusyCores: number): number {
  return Math.max(0, Math.floor(availableParallelism() - otherBusyCores + 0.5));
}
