/**
 * `gainline compare BASELINE C1 C2 …`: each candidate against the baseline, then adjustments across the
 * family and a ranking (engine/compare/candidates.ts).
 *
 * Reading is pipelined so that only the baseline and two candidates are in memory at once: while one
 * candidate is compared on this thread, the next one is parsed on a worker (when it is large enough for
 * a worker to pay off, the same threshold as the two-run read). The baseline is scored once and its
 * evaluation reused for every candidate that shares its conventions.
 */
import { stat } from 'node:fs/promises';
import { resolve } from 'node:path';
import { combineCandidates, compareRuns, readDump, type BaselineMemo, type CompareOptions, type Comparison, type RankedDump } from '../engine/index';
import { formatCandidatesJson, formatCandidatesMarkdown, formatCandidatesTable } from '../engine/report/candidatesReport';
import { formatCandidatesCsv } from '../engine/report/compareCsv';
import type { CompareFormat } from '../engine/report/compareReport';
import type { ScoringSetup } from './conventionArgs';
import { formatDelta, formatP } from '../presentation/numbers';
import type { CliIO } from './io';
import { progressLine } from './progress';
import { CONCURRENT_FROM_BYTES } from './readRuns';

export interface CandidatesRequest {
  readonly setup: ScoringSetup;
  /** How to read the baseline and the candidates (the -a and -b options of the two-run form). */
  readonly readBaseline: ScoringSetup['read'];
  readonly readCandidate: ScoringSetup['read'];
  readonly statistics: Pick<CompareOptions, 'permutations' | 'bootstrap' | 'seed' | 'tieTolerance'>;
  readonly format: CompareFormat;
  /** --fail-if-worse level, if given. */
  readonly alpha: number | undefined;
}

const PROGRESS_FROM_BYTES = 32 * 1024 * 1024;

export async function compareCandidates(sources: readonly string[], request: CandidatesRequest, io: CliIO): Promise<number> {
  const [baseline, ...candidates] = sources as [string, ...string[]];
  const paths = sources.map((s) => resolve(io.cwd, s));
  const sizes = await Promise.all(paths.map(async (p) => (await stat(p)).size));
  const total = sizes.reduce((x, y) => x + y, 0);
  const progress = io.isTTY && total >= PROGRESS_FROM_BYTES ? progressLine(io, `${baseline} vs ${candidates.length} candidates`) : undefined;
  const { setup, statistics } = request;

  const startRead = (k: number): Promise<RankedDump> => {
    const reading = readDump(paths[k]!, { ...request.readCandidate, offThread: sizes[k]! >= CONCURRENT_FROM_BYTES });
    reading.catch(() => undefined); // awaited in turn below; an early failure must not go unhandled meanwhile
    return reading;
  };
  try {
    // The baseline's error wins when both reads fail, as in the two-run read.
    let next = startRead(1);
    const base = await readDump(paths[0]!, request.readBaseline);
    const memo: BaselineMemo = { dump: base, evaluations: new Map() };
    const comparisons: Comparison[] = [];
    for (let i = 0; i < candidates.length; i++) {
      const dump = await next;
      if (i + 1 < candidates.length) next = startRead(i + 2);
      comparisons.push(
        await compareRuns(base, dump, setup.metrics, setup.conventions, {
          ...statistics,
          baseline: memo,
          ...(setup.read.threads !== undefined ? { threads: setup.read.threads } : {}),
          onProgress: progress && ((f) => progress.scoring((i + f) / candidates.length)),
        }),
      );
    }
    progress?.done();
    const many = combineCandidates(baseline, candidates, comparisons);
    io.out(
      request.format === 'json'
        ? formatCandidatesJson(many)
        : request.format === 'markdown'
          ? formatCandidatesMarkdown(many)
          : request.format === 'csv'
            ? formatCandidatesCsv(many)
            : formatCandidatesTable(many),
    );
    if (request.alpha === undefined) return 0;
    let worse = false;
    for (const c of many.candidates) {
      const h = c.comparison.headline;
      const r = c.comparison.byMetric[h]!;
      const p = c.adjusted[h]!.randomization.holm;
      if (r.summary.meanDifference < 0 && p <= request.alpha) {
        worse = true;
        io.err(
          `gainline compare: ${c.run} is worse than the baseline on ${r.key} (Δ ${formatDelta(r.summary.meanDifference)}, ` +
            `Holm-adjusted randomization p ${formatP(p)} <= ${request.alpha})\n`,
        );
      }
    }
    return worse ? 1 : 0;
  } finally {
    progress?.done();
  }
}
