/**
 * Which engine computes the per-query table (`--engine`, or a clickhouse:// dump), and running it.
 */
import { InputError } from '../engine/errors';
import { sqlDefaultMetrics } from '../engine/sql/index';
import type { TableEvaluation } from '../engine/sql/perQueryTable';
import { isClickHouseUrl } from '../engine/sql/clickhouseRunner';
import type { ScoringSetup } from './conventionArgs';

export type EngineName = 'local' | 'duckdb' | 'clickhouse';

export interface EngineValues {
  readonly metrics?: string | undefined;
  readonly engine?: string | undefined;
  readonly 'memory-limit'?: string | undefined;
  readonly 'order-column'?: string | undefined;
}

export function chooseEngine(source: string, values: EngineValues): EngineName {
  const engine = values.engine ?? 'local';
  if (engine !== 'local' && engine !== 'duckdb') throw new InputError('one of local, duckdb', '--engine', undefined, engine);
  if (isClickHouseUrl(source)) {
    if (values.engine !== undefined) throw new InputError('no --engine with a clickhouse:// dump (the server computes it)', '--engine', undefined, engine);
    return 'clickhouse';
  }
  if (values['memory-limit'] !== undefined && engine !== 'duckdb') {
    throw new InputError('--engine duckdb with a memory cap', '--memory-limit', undefined, values['memory-limit']);
  }
  if (values['order-column'] !== undefined) throw new InputError('a clickhouse:// dump (files keep their own row order)', '--order-column', undefined, values['order-column']);
  return engine;
}

export async function evaluateElsewhere(engine: Exclude<EngineName, 'local'>, source: string, path: string, given: ScoringSetup,
  values: EngineValues, sensitivity: boolean): Promise<TableEvaluation> {
  const setup = values.metrics === undefined ? { ...given, metrics: sqlDefaultMetrics(given.metrics, given.conventions) } : given;
  const result = await evaluateOn(engine, source, path, setup, values, sensitivity);
  if (setup.metrics.length === given.metrics.length) return result;
  // Said in the report: the default list was shortened, not silently changed.
  const note = `No --metrics given: computed the default metrics SQL can express exactly (${setup.metrics.map((m) => m.key).join(', ')}); ` +
    `${given.metrics.filter((m) => !setup.metrics.includes(m)).map((m) => m.key).join(' and ')} only with the local engine.`;
  return { ...result, evaluation: { ...result.evaluation, warnings: [note, ...result.evaluation.warnings] } };
}

async function evaluateOn(engine: Exclude<EngineName, 'local'>, source: string, path: string, setup: ScoringSetup,
  values: EngineValues, sensitivity: boolean): Promise<TableEvaluation> {
  if (setup.read.judgments !== undefined || setup.read.scores !== undefined) {
    throw new InputError('one table holding query, item, score and grade for the SQL engines', setup.read.judgments !== undefined ? '--judgments' : '--scores');
  }
  if (engine === 'duckdb') {
    const { evaluateWithDuckDb } = await import('../engine/sql/duckdbRunner');
    const format = setup.read.format;
    if (format !== undefined && format !== 'csv' && format !== 'tsv' && format !== 'parquet') {
      throw new InputError('csv, tsv or parquet for --engine duckdb', '--input-format', undefined, format);
    }
    return evaluateWithDuckDb(path, source, {
      metrics: setup.metrics, conventions: setup.conventions, columns: setup.read.columns, format,
      memoryLimit: values['memory-limit'], threads: setup.read.threads, sensitivity,
    });
  }
  const { evaluateWithClickHouse } = await import('../engine/sql/clickhouseRunner');
  return evaluateWithClickHouse(source, {
    metrics: setup.metrics, conventions: setup.conventions, columns: setup.read.columns, orderColumn: values['order-column'], sensitivity,
  });
}
