/**
 * Each build target's tsconfig admits only its platform's API: a probe file using the other platform's
 * globals must not type-check there, and its clean twin must. Keeps a tsconfig edit from quietly
 * letting DOM code into the engine or Node code into the webview or the presentation module.
 */
import { join, resolve } from 'node:path';
import ts from 'typescript';
import { describe, expect, it } from 'vitest';

const ROOT = resolve(__dirname, '../..');
/** Library and type files parsed once for all probes (parsing Node's types dominates the time). */
const parsedFiles = new Map<string, ts.SourceFile | undefined>();

/** Type errors of `code` compiled as a file in `target` under that target's tsconfig.json. */
function typeErrors(target: string, code: string): string[] {
  const parsed = ts.getParsedCommandLineOfConfigFile(join(ROOT, target, 'tsconfig.json'), {}, {
    ...ts.sys,
    onUnRecoverableConfigFileDiagnostic: (d) => {
      throw new Error(ts.flattenDiagnosticMessageText(d.messageText, '\n'));
    },
  });
  if (parsed === undefined) throw new Error(`cannot read ${target}/tsconfig.json`);
  const probe = join(ROOT, target, 'targetProbe.ts');
  const host = ts.createCompilerHost(parsed.options);
  const readSource = host.getSourceFile.bind(host);
  host.getSourceFile = (name, language, ...rest) => {
    if (name === probe) return ts.createSourceFile(name, code, language);
    if (!parsedFiles.has(name)) parsedFiles.set(name, readSource(name, language, ...rest));
    return parsedFiles.get(name);
  };
  const fileExists = host.fileExists.bind(host);
  host.fileExists = (name) => name === probe || fileExists(name);
  const program = ts.createProgram({ rootNames: [probe], options: parsed.options, host });
  return ts.getPreEmitDiagnostics(program).map((d) => ts.flattenDiagnosticMessageText(d.messageText, ' '));
}

const NODE = "export const bytes = Buffer.byteLength('drill');\n";
const DOM = "export const title = document.title;\n";
const PLAIN = "export const widest = Math.max(...[3, 1, 2].map((n) => n * 2));\n";

describe('each build target type-checks only its platform', () => {
  it('the engine: Node yes, DOM no', () => {
    expect(typeErrors('extension/engine', NODE)).toEqual([]);
    expect(typeErrors('extension/engine', DOM).join('\n')).toMatch(/Cannot find name 'document'/);
  });

  it('host, worker and CLI: Node yes, DOM no', () => {
    expect(typeErrors('extension', NODE)).toEqual([]);
    expect(typeErrors('extension', DOM).join('\n')).toMatch(/Cannot find name 'document'/);
  });

  it('the presentation module: neither Node nor DOM', () => {
    expect(typeErrors('extension/presentation', PLAIN)).toEqual([]);
    expect(typeErrors('extension/presentation', NODE).join('\n')).toMatch(/Cannot find name 'Buffer'/);
    expect(typeErrors('extension/presentation', DOM).join('\n')).toMatch(/Cannot find name 'document'/);
  });

  it('the webview: DOM yes, Node no', () => {
    expect(typeErrors('webview', DOM)).toEqual([]);
    expect(typeErrors('webview', NODE).join('\n')).toMatch(/Cannot find name 'Buffer'/);
  });
});
