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

/** Spans shorter than this look further back, or fall back to the load average: the kernel counters tick every 10 ms. */
const SHORTEST_SPAN_MS = 250;
/** How far back a short span may look (as far as the 1-minute load average does, without our own threads in it). */
const LONGEST_LOOKBACK_MS = 60_000;
/** Samples kept per sampler for looking back. */
const KEPT_SAMPLES = 8;

/**
 * The samples earlier meters of this thread took, newest last, per sampling function (a test's scripted
 * samples never mix with the real counters).
 */
const earlierSamples = new WeakMap<() => CoreSample, CoreSample[]>();

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
    remember(sample, this.start);
  }

  /**
   * Cores busy with other programs since the meter started (0 or more). A span too short for the counters
   * (a mid-sized read) is measured from an earlier meter's sample of the last few seconds instead, and
   * from the load average only when there is none: a process that reads dump after dump (the editor's
   * engine thread) would otherwise see its own earlier reads in the load average and stay on one thread.
   */
  otherBusyCores(): number {
    const end = this.sample();
    let from: CoreSample | undefined = this.start;
    if (end.atMs - from.atMs < SHORTEST_SPAN_MS) {
      from = undefined;
      const earlier = earlierSamples.get(this.sample) ?? [];
      // The newest sample far enough back.
      for (let k = earlier.length - 1; k >= 0 && from === undefined; k--) {
        const age = end.atMs - earlier[k]!.atMs;
        if (age >= SHORTEST_SPAN_MS && age <= LONGEST_LOOKBACK_MS) from = earlier[k];
      }
    }
    remember(this.sample, end);
    if (from === undefined) return this.loadAverage();
    const others = end.busyMs - from.busyMs - (end.ownMs - from.ownMs);
    return Math.max(0, others / (end.atMs - from.atMs));
  }
}

function remember(sampler: () => CoreSample, sample: CoreSample): void {
  let list = earlierSamples.get(sampler);
  if (list === undefined) earlierSamples.set(sampler, (list = []));
  list.push(sample);
  if (list.length > KEPT_SAMPLES) list.shift();
}

/**
 * Whole cores left for our own threads when other programs keep `otherBusyCores` busy (rounded to the
 * nearest core; 0 or more). One rule for the scoring threads of a dump and the lanes of a series.
 */
export function freeCores(otherBusyCores: number): number {
  return Math.max(0, Math.floor(availableParallelism() - otherBusyCores + 0.5));
}
