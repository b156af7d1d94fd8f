/**
 * The lint rules that guard the layers, each fed a file that breaks it. A rule that is renamed,
 * mis-scoped or silently disabled in eslint.config.mjs stops firing here and fails the suite.
 * Every probe also has a clean twin in the same place, so a probe cannot pass by failing to parse
 * or by tripping an unrelated rule.
 */
import { readFileSync } from 'node:fs';
import { resolve } from 'node:path';
import { ESLint } from 'eslint';
import { beforeAll, describe, expect, it } from 'vitest';

const ROOT = resolve(__dirname, '../..');
let eslint: ESLint;

beforeAll(() => {
  // ignore: false so the fixture folder (left out of `npm run lint`) can be linted here.
  eslint = new ESLint({ cwd: ROOT, ignore: false });
});

/** Rule ids reported on `code` linted as if it lived at `path` (relative to the project root). */
async function rulesFiredAt(path: string, code: string): Promise<string[]> {
  const [result] = await eslint.lintText(code, { filePath: resolve(ROOT, path) });
  const fatal = result.messages.filter((m) => m.fatal);
  expect(fatal, `probe ${path} did not parse`).toEqual([]);
  return result.messages.map((m) => m.ruleId ?? '(none)');
}

interface Probe {
  readonly why: string;
  readonly path: string;
  readonly bad: string;
  readonly good: string;
  readonly rule: string;
}

const probes: Probe[] = [
  {
    why: 'the engine imports no editor API',
    path: 'extension/engine/evaluate/probe.ts',
    bad: "import * as vscode from 'vscode';\nexport const v = vscode;\n",
    good: "import { InputError } from '../errors';\nexport const e = InputError;\n",
    rule: 'no-restricted-imports',
  },
  {
    why: 'the engine imports no host code',
    path: 'extension/engine/evaluate/probe.ts',
    bad: "import type { GainlineConfig } from '../../host/config';\nexport type C = GainlineConfig;\n",
    good: "import type { RankedDump } from '../model/dump';\nexport type D = RankedDump;\n",
    rule: 'import-x/no-restricted-paths',
  },
  {
    why: 'the engine imports no worker code',
    path: 'extension/engine/evaluate/probe.ts',
    bad: "import { isCancelled } from '../../worker/cancelFlags';\nexport const c = isCancelled;\n",
    good: "import { discountTable } from '../metrics/discount';\nexport const d = discountTable;\n",
    rule: 'import-x/no-restricted-paths',
  },
  {
    why: 'the engine imports no CLI code',
    path: 'extension/engine/readers/probe.ts',
    bad: "import * as io from '../../cli/io';\nexport const i = io;\n",
    good: "import * as detect from './detect';\nexport const d = detect;\n",
    rule: 'import-x/no-restricted-paths',
  },
  {
    why: 'the engine imports no webview code',
    path: 'extension/engine/report/probe.ts',
    bad: "import * as format from '../../../webview/src/model/format';\nexport const f = format;\n",
    good: "import * as csv from './csv';\nexport const c = csv;\n",
    rule: 'import-x/no-restricted-paths',
  },
  {
    why: 'the webview does not import the engine, even for types',
    path: 'webview/src/screens/probe.ts',
    bad: "import type { RankedDump } from '../../../extension/engine/model/dump';\nexport type D = RankedDump;\n",
    good: "import type { OverviewModel } from '../../../extension/protocol/messages';\nexport type O = OverviewModel;\n",
    rule: 'import-x/no-restricted-paths',
  },
  {
    why: 'the webview does not import host code',
    path: 'webview/src/model/probe.ts',
    bad: "import * as config from '../../../extension/host/config';\nexport const c = config;\n",
    good: "import * as request from '../../../extension/channel/request';\nexport const r = request;\n",
    rule: 'import-x/no-restricted-paths',
  },
  {
    why: 'the webview loads no Node built-in',
    path: 'webview/src/ui/probe.ts',
    bad: "import { readFileSync } from 'node:fs';\nexport const r = readFileSync;\n",
    good: "import { Chart } from 'chart.js';\nexport const c = Chart;\n",
    rule: 'no-restricted-imports',
  },
  {
    why: 'the presentation module loads no editor API',
    path: 'extension/presentation/probe.ts',
    bad: "import * as vscode from 'vscode';\nexport const v = vscode;\n",
    good: "export const dash = '–';\n",
    rule: 'no-restricted-imports',
  },
  {
    why: 'the presentation module depends on no target',
    path: 'extension/presentation/probe.ts',
    bad: "import type { GainlineConfig } from '../host/config';\nexport type C = GainlineConfig;\n",
    good: "import type { Conventions } from '../engine/metrics/conventions';\nexport type C = Conventions;\n",
    rule: 'import-x/no-restricted-paths',
  },
  {
    why: 'the engine reaches its threads through the channel, not the protocol',
    path: 'extension/engine/threads/probe.ts',
    bad: "import type { WorkerRequests } from '../../protocol/worker';\nexport type W = WorkerRequests;\n",
    good: "import { RequestClient } from '../../channel/request';\nexport const c = RequestClient;\n",
    rule: 'import-x/no-restricted-paths',
  },
  {
    why: 'the channel depends on no layer',
    path: 'extension/channel/probe.ts',
    bad: "import { InputError } from '../engine/errors';\nexport const e = InputError;\n",
    good: "import { RemoteError } from './request';\nexport const e = RemoteError;\n",
    rule: 'import-x/no-restricted-paths',
  },
  {
    why: 'the channel loads no Node built-in (the webview runs it)',
    path: 'extension/channel/probe.ts',
    bad: "import { Worker } from 'node:worker_threads';\nexport const w = Worker;\n",
    good: "export const kinds = ['request', 'response', 'cancel'];\n",
    rule: 'no-restricted-imports',
  },
  {
    why: 'a source file stays within 400 lines',
    path: 'extension/engine/model/probe.ts',
    bad: Array.from({ length: 401 }, (_, i) => `export const line${i} = ${i};`).join('\n') + '\n',
    good: Array.from({ length: 400 }, (_, i) => `export const line${i} = ${i};`).join('\n') + '\n',
    rule: 'max-lines',
  },
];

describe('each boundary rule fires on a file that breaks it', () => {
  for (const probe of probes) {
    it(probe.why, async () => {
      expect(await rulesFiredAt(probe.path, probe.bad)).toContain(probe.rule);
      expect(await rulesFiredAt(probe.path, probe.good)).toEqual([]);
    });
  }
});

describe('import cycles', () => {
  const fixture = (name: string) => `test/lint/fixtures/typeCycle/${name}`;

  it('a cycle made only of type imports is reported on both files', async () => {
    for (const name of ['shelf.ts', 'aisle.ts']) {
      const code = readFileSync(resolve(ROOT, fixture(name)), 'utf8');
      expect(await rulesFiredAt(fixture(name), code)).toEqual(['local/no-import-cycle']);
    }
  });

  it('the same file without the import back is clean', async () => {
    const code = "import type { Shelf } from './shelf';\nexport type Lone = Shelf;\n";
    expect(await rulesFiredAt(fixture('lone.ts'), code)).toEqual([]);
  });

  it('a re-export counts as an import', async () => {
    const code = "export type { Shelf } from './shelf';\n";
    expect(await rulesFiredAt(fixture('aisle.ts'), code)).toEqual(['local/no-import-cycle']);
  });
});
