/**
 * Parsing of the metric list and gain convention as users write them (command line, settings).
 * Every mistake is an InputError naming what was expected.
 */
import { InputError } from '../errors';
import type { GainConvention, NoRelevantPolicy, TieConvention } from './conventions';
import { isMetricName, metricDefinition, metricSyntax, type MetricSpec } from './registry';

const EXPECTED_METRIC = `a metric: ${metricSyntax()} (k a whole number >= 1)`;

/** "ndcg@10,err@10,ap,rr,p@5,r@10,rbp,tau" → specs in the order written. Case-insensitive; keys are lower-case. */
export function parseMetricList(text: string): MetricSpec[] {
  const parts = text.split(/[,\s]+/).filter((p) => p.length > 0);
  if (parts.length === 0) throw new InputError('at least one metric, e.g. "ndcg@10,ap"', undefined, undefined, text);
  const specs: MetricSpec[] = [];
  const seen = new Set<string>();
  for (const part of parts) {
    const spec = parseMetric(part);
    if (seen.has(spec.key)) throw new InputError('each metric listed once', undefined, undefined, part);
    seen.add(spec.key);
    specs.push(spec);
  }
  return specs;
}

function parseMetric(part: string): MetricSpec {
  const m = /^([a-z]+)(?:@(\d+))?$/.exec(part.trim().toLowerCase());
  if (!m) throw new InputError(EXPECTED_METRIC, undefined, undefined, part);
  const name = m[1]!;
  if (!isMetricName(name)) throw new InputError(EXPECTED_METRIC, undefined, undefined, part);
  if (m[2] === undefined) return { name, key: name };
  if (metricDefinition(name).cutoff === 'none') throw new InputError(`${name} without a cut-off`, undefined, undefined, part);
  const k = Number(m[2]);
  if (!Number.isSafeInteger(k) || k < 1) throw new InputError('a cut-off k >= 1', undefined, undefined, part);
  return { name, k, key: `${name}@${k}` };
}

const EXPECTED_GAIN = 'a gain: "exponential", "linear" or "map:0=0,1=1,2=3" (grade=gain pairs)';

/** "exponential" | "linear" | "map:0=0,1=1,2=3,3=7". */
export function parseGain(text: string): GainConvention {
  const t = text.trim().toLowerCase();
  if (t === 'exponential') return { kind: 'exponential' };
  if (t === 'linear') return { kind: 'linear' };
  if (!t.startsWith('map:')) throw new InputError(EXPECTED_GAIN, undefined, undefined, text);
  const gains = new Map<number, number>();
  for (const pair of t.slice(4).split(',')) {
    const m = /^\s*(-?[\d.]+(?:e-?\d+)?)\s*=\s*(-?[\d.]+(?:e-?\d+)?)\s*$/.exec(pair);
    const grade = m ? Number(m[1]) : NaN;
    const gain = m ? Number(m[2]) : NaN;
    if (!Number.isFinite(grade) || !Number.isFinite(gain)) throw new InputError(EXPECTED_GAIN, undefined, undefined, pair);
    if (gains.has(grade)) throw new InputError('each grade once in the gain map', undefined, undefined, pair);
    gains.set(grade, gain);
  }
  return { kind: 'map', gains };
}

/** The gain convention written back the way parseGain reads it. */
export function formatGain(gain: GainConvention): string {
  if (gain.kind !== 'map') return gain.kind;
  return 'map:' + [...gain.gains].sort((a, b) => a[0] - b[0]).map(([g, v]) => `${g}=${v}`).join(',');
}

const TIES: readonly TieConvention[] = ['average', 'pessimistic', 'optimistic', 'file-order'];
export function parseTies(text: string): TieConvention {
  const t = text.trim().toLowerCase() as TieConvention;
  if (!TIES.includes(t)) throw new InputError(`ties: one of ${TIES.join(', ')}`, undefined, undefined, text);
  return t;
}

const POLICIES: readonly NoRelevantPolicy[] = ['skip', 'zero', 'one'];
export function parseNoRelevant(text: string): NoRelevantPolicy {
  const t = text.trim().toLowerCase() as NoRelevantPolicy;
  if (!POLICIES.includes(t)) throw new InputError(`no-relevant policy: one of ${POLICIES.join(', ')}`, undefined, undefined, text);
  return t;
}
