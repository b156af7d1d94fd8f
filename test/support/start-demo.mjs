// `npm run demo`: builds and packages the extension, then opens the demo
// workspace with it: in desktop VS Code when `code` is on PATH, otherwise in
// code-server on localhost (installed under .e2e/ if needed), printing the
// address to open. Ctrl+C stops the code-server it started.
import { spawnSync } from 'node:child_process';
import { existsSync } from 'node:fs';
import { join } from 'node:path';
import { E2E_DIR, ensureCodeServer, REPO_ROOT } from './code-server-install.mjs';
import { installVsix, prepareProfile, startCodeServer } from './code-server-launch.mjs';
import { packageVsix } from './package-vsix.mjs';

const demoFolder = join(REPO_ROOT, 'demo');

function run(command, args) {
  const result = spawnSync(command, args, { cwd: REPO_ROOT, stdio: 'inherit' });
  if (result.status !== 0) throw new Error(`${command} ${args.join(' ')} exited with ${result.status ?? result.signal}`);
}

function onPath(command) {
  return spawnSync('sh', ['-c', `command -v ${command}`], { encoding: 'utf8' }).stdout.trim();
}

async function main() {
  run(process.execPath, ['build.mjs']);
  if (!existsSync(join(demoFolder, 'runs', 'model-a.csv')) && existsSync(join(REPO_ROOT, 'test', 'support', 'make-demo-data.mjs'))) {
    run(process.execPath, ['test/support/make-demo-data.mjs']);
  }
  const vsix = packageVsix();
  const code = process.env.GAINLINE_DEMO_NO_DESKTOP ? '' : onPath('code');
  if (code) {
    run(code, ['--install-extension', vsix, '--force']);
    run(code, [demoFolder]);
    console.log(`Opened ${demoFolder} in VS Code with ${vsix}. Right-click a file under runs/ and choose "Open With…" → Gainline Ranked Lists.`);
    return;
  }
  console.log('No desktop VS Code ("code") on PATH: using code-server on localhost.');
  ensureCodeServer();
  const profile = prepareProfile(join(E2E_DIR, 'profile-demo'));
  installVsix(profile, vsix);
  const port = process.env.GAINLINE_DEMO_PORT ? Number(process.env.GAINLINE_DEMO_PORT) : undefined;
  const server = await startCodeServer({ folder: demoFolder, profile, port, logFile: join(E2E_DIR, 'demo-code-server.log') });
  console.log('');
  console.log(`Gainline demo is running. Open this address in a browser:\n\n  ${server.folderUrl}\n`);
  console.log('Then open a file under runs/ with "Open With…" → Gainline Ranked Lists, or run "Gainline: Compare Two Runs".');
  console.log('Press Ctrl+C to stop.');
  const stop = async () => {
    await server.stop();
    process.exit(0);
  };
  process.on('SIGINT', stop);
  process.on('SIGTERM', stop);
  server.process.on('exit', (code) => {
    console.log(`code-server exited (${code}).`);
    process.exit(code ?? 0);
  });
}

main().catch((error) => {
  console.error(error instanceof Error ? error.message : error);
  process.exit(1);
});
