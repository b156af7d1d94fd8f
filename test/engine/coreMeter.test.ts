/**
 * The core meter decides whether scoring may take a second thread, so it must subtract this process's
 * own CPU time (our parse threads made a trailing load average report both cores busy) and must see
 * a program that is busy right now.
 */
import { spawn } from 'node:child_process';
import { availableParallelism } from 'node:os';
import { describe, expect, it } from 'vitest';
import { CoreMeter, type CoreSample } from '../../extension/engine/evaluate/coreMeter';
import { scoringThreads, scoringWork } from '../../extension/engine/threads/parallelEvaluate';

function scripted(samples: CoreSample[]): () => CoreSample {
  let k = 0;
  return () => samples[k++]!;
}

describe('CoreMeter', () => {
  it('counts only the busy time that is not ours', () => {
    // 1 s: the machine was busy for 2.6 core-seconds, 1.9 of them ours -> others used 0.7 cores.
    const meter = new CoreMeter(scripted([{ busyMs: 10_000, ownMs: 100, atMs: 0 }, { busyMs: 12_600, ownMs: 2_000, atMs: 1_000 }]), () => 9);
    expect(meter.otherBusyCores()).toBeCloseTo(0.7, 12);
  });

  it('never reports fewer than zero cores (the counters tick at different times)', () => {
    const meter = new CoreMeter(scripted([{ busyMs: 0, ownMs: 0, atMs: 0 }, { busyMs: 1_990, ownMs: 2_000, atMs: 1_000 }]), () => 9);
    expect(meter.otherBusyCores()).toBe(0);
  });

  it('falls back to the load average for a span too short for the 10 ms counters', () => {
    const meter = new CoreMeter(scripted([{ busyMs: 0, ownMs: 0, atMs: 0 }, { busyMs: 50, ownMs: 0, atMs: 100 }]), () => 1.25);
    expect(meter.otherBusyCores()).toBe(1.25);
  });

  it('measures a short span from an earlier meter of the same sampler, within the last minute', () => {
    // Samples in order: meter 1 starts (t=0), meter 1 ends (t=2000), meter 2 starts (t=5000), meter 2 ends (t=5100).
    // Meter 2's 100 ms is too short for the counters: it measures from t=2000 instead (3.1 s, others 0.5 cores),
    // neither from t=0 (a later sample is newer and far enough back) nor from the load average.
    const samples: CoreSample[] = [
      { busyMs: 0, ownMs: 0, atMs: 0 },
      { busyMs: 4_000, ownMs: 3_900, atMs: 2_000 },
      { busyMs: 5_500, ownMs: 3_900, atMs: 5_000 },
      { busyMs: 5_750, ownMs: 4_000, atMs: 5_100 },
    ];
    const sampler = scripted(samples);
    expect(new CoreMeter(sampler, () => 9).otherBusyCores()).toBeCloseTo(0.05, 12);
    expect(new CoreMeter(sampler, () => 9).otherBusyCores()).toBeCloseTo((5_750 - 4_000 - (4_000 - 3_900)) / 3_100, 12);
  });

  it('falls back to the load average when the earlier samples are over a minute old', () => {
    const sampler = scripted([{ busyMs: 0, ownMs: 0, atMs: 0 }, { busyMs: 0, ownMs: 0, atMs: 61_000 }, { busyMs: 50, ownMs: 0, atMs: 61_100 }]);
    new CoreMeter(sampler, () => 9);
    expect(new CoreMeter(sampler, () => 0.75).otherBusyCores()).toBe(0.75);
  });

  it('sees another program spinning a core now', async () => {
    const meter = new CoreMeter();
    const child = spawn(process.execPath, ['-e', 'const end = Date.now() + 900; while (Date.now() < end);'], { stdio: 'ignore' });
    await new Promise((done) => child.on('exit', done));
    // A lower bound: other load on a shared machine only adds to it.
    expect(meter.otherBusyCores()).toBeGreaterThan(0.4);
  });
});

describe('scoringThreads', () => {
  it('uses the free cores measured, explicit threads win, small dumps stay on one thread', () => {
    expect(scoringThreads(10_000_000, undefined, 0)).toBe(Math.min(4, availableParallelism()));
    expect(scoringThreads(10_000_000, undefined, 64)).toBe(1);
    expect(scoringThreads(10_000_000, 3, 64)).toBe(3);
    expect(scoringThreads(1_000, undefined, 0)).toBe(1);
  });

  // A million one-row queries cost 1.25 s to score on one thread, three times a million rows in long queries.
  it('counts short queries as more work than their rows', () => {
    expect(scoringThreads(scoringWork(1_000_000, 1_000_000), undefined, 0)).toBe(Math.min(4, availableParallelism()));
    expect(scoringThreads(scoringWork(1_000_000, 10_000), undefined, 0)).toBe(1);
    expect(scoringWork(1_000_000, 0)).toBe(1_000_000);
  });
});
