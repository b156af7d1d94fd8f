// Builds the workspace the end-to-end run opens: a fresh copy of demo/ (so the
// demo folder is never modified) plus an e2e/ folder with files made for the
// scenarios: a live copy to rewrite, a dump whose ids contain HTML, and a
// malformed dump. All queries are in the invented hardware-store scenario.
import { copyFileSync, cpSync, mkdirSync, readFileSync, rmSync, writeFileSync } from 'node:fs';
import { join } from 'node:path';
import { RUN_DIR, REPO_ROOT } from '../support/code-server-install.mjs';

export const HOSTILE_ITEM = '<img src=x onerror=alert(1)>';
export const HOSTILE_QUERY = '<b>claw hammer</b> <script>alert(2)</script>';

function csvField(text) {
  return /[",\n]/.test(text) ? `"${text.replace(/"/g, '""')}"` : text;
}

function hostileDump() {
  const rows = [['query', 'product_id', 'grade', 'score']];
  // The hostile query ranks its best item last so it is the worst query and
  // the first row of the worst-queries table.
  rows.push([HOSTILE_QUERY, HOSTILE_ITEM, '3', '0.10']);
  rows.push([HOSTILE_QUERY, 'SKU-HAM-002', '0', '0.90']);
  rows.push([HOSTILE_QUERY, 'SKU-HAM-003', '1', '0.50']);
  rows.push(['wood screws 4x40', 'SKU-SCR-440', '3', '0.95']);
  rows.push(['wood screws 4x40', 'SKU-SCR-435', '1', '0.40']);
  rows.push(['wood screws 4x40', 'SKU-NAIL-01', '0', '0.20']);
  return rows.map((r) => r.map(csvField).join(',')).join('\n') + '\n';
}

function malformedDump() {
  // A score that is not a number, in a file that otherwise looks right.
  return [
    'query,product_id,grade,score',
    'cordless drill 18v,SKU-DRL-018,2,0.81',
    'cordless drill 18v,SKU-DRL-012,1,very high',
    'cordless drill 18v,SKU-BAT-005,0,0.12',
  ].join('\n') + '\n';
}

/**
 * A checkpoint of a training job made from a demo run: every score moved by a fixed pattern of the row
 * number times `spread` (no randomness, so every run writes the same files and the CLI reads them too).
 */
export function checkpointFrom(run, spread) {
  const lines = readFileSync(run, 'utf8').split('\n');
  return lines.map((line, i) => {
    if (i === 0 || line === '') return line;
    const fields = line.split(',');
    fields[3] = (Number(fields[3]) + spread * (((i * 7919) % 13) - 6) / 6).toFixed(4);
    return fields.join(',');
  }).join('\n');
}

/** Creates .e2e/workspace afresh and returns the paths the scenarios use. */
export function makeWorkspace() {
  const root = join(RUN_DIR, 'workspace');
  rmSync(root, { recursive: true, force: true });
  cpSync(join(REPO_ROOT, 'demo'), root, { recursive: true });
  const e2e = join(root, 'e2e');
  mkdirSync(e2e, { recursive: true });
  const files = {
    root,
    runA: join(root, 'runs', 'model-a.csv'),
    runB: join(root, 'runs', 'model-b.csv'),
    runBParquet: join(root, 'runs', 'model-b.parquet'),
    live: join(e2e, 'live-run.csv'),
    hostile: join(e2e, 'hostile-ids.csv'),
    malformed: join(e2e, 'broken-scores.csv'),
    unnamedColumns: join(e2e, 'export-unnamed-columns.csv'),
  };
  copyFileSync(files.runA, files.live);
  // Two training series: one complete (epochs 1, 2 and 10: 2 sorts before 10), one the live scenario grows.
  files.training = join(e2e, 'training');
  files.liveTraining = join(e2e, 'live-training');
  mkdirSync(files.training, { recursive: true });
  mkdirSync(files.liveTraining, { recursive: true });
  writeFileSync(join(files.training, 'epoch-1.csv'), checkpointFrom(files.runA, 0));
  writeFileSync(join(files.training, 'epoch-2.csv'), checkpointFrom(files.runB, 0));
  writeFileSync(join(files.training, 'epoch-10.csv'), checkpointFrom(files.runB, 0.8));
  writeFileSync(join(files.liveTraining, 'step-100.csv'), checkpointFrom(files.runA, 0.2));
  writeFileSync(join(files.liveTraining, 'step-200.csv'), checkpointFrom(files.runB, 0.2));
  writeFileSync(files.hostile, hostileDump());
  writeFileSync(files.malformed, malformedDump());
  // Headers no role name matches: the error must say how to name them.
  writeFileSync(files.unnamedColumns, 'search_id,sku,stars,model_output\ncordless drill 18v,SKU-DRL-018,2,0.81\n');
  return files;
}

/** Workspace-relative path, as typed into Quick Open. */
export function relative(files, absolute) {
  return absolute.slice(files.root.length + 1);
}
