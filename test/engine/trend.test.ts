/**
 * Training series: the order rule on hand-made names, and `gainline trend` (dist/cli.js) against a slow,
 * obvious recomputation from `gainline eval` of each checkpoint on its own (whose metrics the scikit-learn
 * and published-example tests cover). Invented hardware store queries, seeded scores.
 */
import { utimesSync, writeFileSync } from 'node:fs';
import { join } from 'node:path';
import { describe, expect, it } from 'vitest';
import { checkpointNumber, nameMatches, orderSeries } from '../../extension/engine/trend/series';
import { fixtureDir, runCli } from '../cli/support/runCli';

const file = (name: string, modifiedMs = 0) => ({ path: `/x/${name}`, name, modifiedMs });

describe('series order', () => {
  it('takes the last number of the name without its dump extensions, so 2 comes before 10', () => {
    expect(checkpointNumber('epoch-10.csv')).toBe(10);
    expect(checkpointNumber('run3-epoch-12.csv.gz')).toBe(12);
    expect(checkpointNumber('ckpt/step_000200.parquet')).toBe(200);
    expect(checkpointNumber('model.jsonl')).toBeUndefined();
    const names = ['epoch-10.csv', 'epoch-2.csv', 'epoch-1.csv'];
    expect(orderSeries(names.map((n) => file(n)), 'number').map((c) => c.name)).toEqual(['epoch-1.csv', 'epoch-2.csv', 'epoch-10.csv']);
  });

  it('refuses names without a number and two files with the same number, naming them', () => {
    expect(() => orderSeries([file('epoch-1.csv'), file('final.csv')], 'number')).toThrow(/final\.csv: expected a checkpoint number .*--order time/);
    expect(() => orderSeries([file('a-epoch-3.csv'), file('b-epoch-3.csv')], 'number')).toThrow(/"a-epoch-3\.csv" and "b-epoch-3\.csv" both end in 3/);
  });

  it('by time: oldest first, equal times by name', () => {
    const files = [file('c.csv', 30), file('b.csv', 10), file('a.csv', 30)];
    expect(orderSeries(files, 'time').map((c) => c.name)).toEqual(['b.csv', 'a.csv', 'c.csv']);
  });

  it('name patterns: * any run, ? one character, everything else literal', () => {
    expect(nameMatches('epoch-*.csv', 'epoch-12.csv')).toBe(true);
    expect(nameMatches('epoch-*.csv', 'epoch-12.csvx')).toBe(false);
    expect(nameMatches('epoch-?.csv', 'epoch-12.csv')).toBe(false);
    expect(nameMatches('a.b', 'axb')).toBe(false);
  });
});

const NAMES = ['cordless drill 18v', 'wood screws 4x40', 'hex key set', 'paint roller 9in', 'tile spacers 3mm', 'pipe wrench 14in'];

/** 25 queries × 6 items; `skill` pushes relevant items up; `drop` leaves queries out of this checkpoint. */
function checkpoint(seed: number, skill: number, drop: readonly number[] = []): string {
  let state = seed;
  const random = () => ((state = (Math.imul(state, 1103515245) + 12345) >>> 0) / 2 ** 32);
  const lines = ['query,product_id,grade,score'];
  for (let q = 0; q < 25; q++) {
    if (drop.includes(q)) continue;
    const direction = q % 4 === 0 ? -1 : 1; // a quarter of the queries get worse as training goes on
    for (let i = 0; i < 6; i++) {
      const grade = (q + 2 * i) % 5 === 0 ? 2 : i % 4 === 1 ? 1 : 0;
      lines.push(`${NAMES[q % NAMES.length]} #${q},p${i},${grade},${(random() + direction * skill * grade).toFixed(6)}`);
    }
  }
  return lines.join('\n') + '\n';
}

const EPOCHS = [1, 2, 5, 10, 20];
const SKILL = [0, 0.3, 0.6, 0.4, 0.5];
const dir = fixtureDir(Object.fromEntries(EPOCHS.map((e, k) => [`epoch-${e}.csv`, checkpoint(100 + e, SKILL[k]!, e === 5 ? [7, 9] : [])])));
const ARGS = ['--metrics', 'ndcg@5,rr', '--bootstrap', '300', '--top', '4'];

function json(args: string[]): any {
  const r = runCli(args, dir);
  expect(r.stderr).toBe('');
  expect(r.code).toBe(0);
  return JSON.parse(r.stdout);
}

describe('gainline trend against a slow recomputation from eval', () => {
  const trend = json(['trend', '.', ...ARGS, '--format', 'json']);
  const evals = EPOCHS.map((e) => json(['eval', `epoch-${e}.csv`, '--metrics', 'ndcg@5,rr', '--format', 'json']));

  it('lists the checkpoints in number order with the eval means', () => {
    expect(trend.runs.map((r: any) => r.run)).toEqual(EPOCHS.map((e) => `epoch-${e}.csv`));
    trend.runs.forEach((r: any, k: number) => {
      expect(r.summary).toEqual(evals[k].summary);
      expect(r.counted).toEqual(evals[k].counted);
      for (const key of ['ndcg@5', 'rr']) {
        // A percentile interval of the mean lies within the range of the values and brackets the mean here.
        expect(r.interval95[key].low).toBeLessThanOrEqual(r.summary[key]);
        expect(r.interval95[key].high).toBeGreaterThanOrEqual(r.summary[key]);
      }
    });
  });

  it('trajectories, peaks and the worst falls equal the slow recomputation', () => {
    // Series query order: first seen, checkpoints in order.
    const names: string[] = [];
    for (const ev of evals) for (const q of ev.queries) if (!names.includes(q.query)) names.push(q.query);
    expect(trend.perQuery.query).toEqual(names);
    const value = (k: number, name: string, key: string) => {
      const row = evals[k].queries.find((q: any) => q.query === name);
      return row === undefined || row.skipped || row[key] === null ? null : row[key];
    };
    for (const key of ['ndcg@5', 'rr']) {
      names.forEach((name, q) => expect(trend.perQuery.values[key][q]).toEqual(EPOCHS.map((_, k) => value(k, name, key))));
      const means = evals.map((ev) => ev.summary[key]);
      expect(trend.peaks[key].index).toBe(means.indexOf(Math.max(...means)));
    }
    const last = EPOCHS.length - 1;
    const firstToLast = names
      .map((name, id) => ({ name, id, first: value(0, name, 'ndcg@5'), last: value(last, name, 'ndcg@5') }))
      .filter((d) => d.first !== null && d.last !== null && d.last - d.first < 0)
      .sort((x, y) => x.last - x.first - (y.last - y.first) || x.id - y.id)
      .slice(0, 4);
    expect(trend.worstFirstToLast.map((d: any) => [d.query, d.delta])).toEqual(firstToLast.map((d) => [d.name, d.last - d.first]));
    const peakToLast = names
      .map((name, id) => {
        const earlier = EPOCHS.slice(0, last).map((_, k) => value(k, name, 'ndcg@5')).filter((v): v is number => v !== null);
        return { name, id, peak: Math.max(...earlier), last: value(last, name, 'ndcg@5') };
      })
      .filter((d) => d.last !== null && d.peak > d.last)
      .sort((x, y) => x.last - x.peak - (y.last - y.peak) || x.id - y.id)
      .slice(0, 4);
    expect(trend.worstPeakToLast.map((d: any) => [d.query, d.delta])).toEqual(peakToLast.map((d) => [d.name, d.last - d.peak]));
    expect(trend.worstPeakToLast.length).toBeGreaterThan(0);
  });

  it('reports the checkpoint with a different query set, with counts and examples, without intersecting', () => {
    expect(trend.querySets.queries).toBe(25);
    expect(trend.querySets.inEveryCheckpoint).toBe(23);
    expect(trend.querySets.checkpoints[2]).toEqual({ run: 'epoch-5.csv', missing: 2, missingExamples: ['wood screws 4x40 #7', 'paint roller 9in #9'] });
    expect(trend.runs[2].queries).toBe(23);
    expect(trend.runs[0].queries).toBe(25);
    expect(trend.warnings[0]).toMatch(/epoch-5\.csv lacks 2 of the series' 25 queries/);
  });

  it('orders by modification time with --order time, and takes patterns and files', () => {
    EPOCHS.forEach((e, k) => utimesSync(join(dir, `epoch-${e}.csv`), 1000, 1000 + (EPOCHS.length - k) * 10));
    const byTime = json(['trend', '.', ...ARGS, '--format', 'json', '--order', 'time']);
    expect(byTime.runs.map((r: any) => r.run)).toEqual(EPOCHS.map((e) => `epoch-${e}.csv`).reverse());
    const byPattern = json(['trend', 'epoch-?.csv', 'epoch-20.csv', ...ARGS, '--format', 'json']);
    expect(byPattern.runs.map((r: any) => r.run)).toEqual(['epoch-1.csv', 'epoch-2.csv', 'epoch-5.csv', 'epoch-20.csv']);
  });

  it('CSV has one row per checkpoint; table and Markdown mark the peak', () => {
    const csv = runCli(['trend', '.', ...ARGS, '--format', 'csv'], dir).stdout.trim().split('\n');
    expect(csv[0]).toBe('run,position,queries,ndcg@5,ndcg@5_low,ndcg@5_high,ndcg@5_counted,rr,rr_low,rr_high,rr_counted');
    expect(csv.slice(1).map((l) => l.split(',')[0])).toEqual(EPOCHS.map((e) => `epoch-${e}.csv`));
    expect(Number(csv[1]!.split(',')[3])).toBe(trend.runs[0].summary['ndcg@5']);
    const peak = trend.peaks['ndcg@5'].run;
    expect(runCli(['trend', '.', ...ARGS], dir).stdout).toMatch(new RegExp(`${peak.replace('.', '\\.')} .*peak`));
    expect(runCli(['trend', '.', ...ARGS, '--format', 'markdown'], dir).stdout).toMatch(/^\| # \| checkpoint \| mean \| 95% interval \|/m);
  });

  it('scores the same with the checkpoint worker lane as on one thread (--threads 1), byte for byte', () => {
    const one = runCli(['trend', '.', ...ARGS, '--format', 'json', '--threads', '1'], dir);
    expect(one.code).toBe(0);
    expect(one.stdout).toBe(runCli(['trend', '.', ...ARGS, '--format', 'json'], dir).stdout);
  });

  it('bad input is one line and exit 2', () => {
    writeFileSync(join(dir, 'notes.csv'), 'query,product_id,grade,score\nq,p,1,0.5\n');
    const r = runCli(['trend', '.', ...ARGS], dir);
    expect(r.code).toBe(2);
    expect(r.stderr).toMatch(/notes\.csv: expected a checkpoint number/);
    expect(r.stderr.trim().split('\n')).toHaveLength(1);
    expect(runCli(['trend', 'epoch-1.csv', 'epoch-1.csv'], dir).stderr).toMatch(/each checkpoint once/);
    expect(runCli(['trend', 'nothing-*.csv'], dir).code).toBe(2);
    // A broken checkpoint scored on the worker lane is reported like one read here: its file and line.
    writeFileSync(join(dir, 'notes.csv'), 'query,product_id,grade,score\nq,p,1,high\n');
    const broken = runCli(['trend', 'epoch-1.csv', 'epoch-2.csv', 'notes.csv', '--order', 'time', ...ARGS], dir);
    expect(broken.code).toBe(2);
    expect(broken.stderr).toMatch(/notes\.csv:2: expected/);
  });
});
