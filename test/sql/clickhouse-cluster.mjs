// Shared by the cluster test and the benchmark (test/bench/bench-sql.mjs); types in clickhouse-cluster.d.mts.
/**
 * Two ClickHouse servers on loopback forming a two-shard cluster, for the cluster test. Each gets free
 * ports, its own config and data folder in a temporary directory, and is stopped by its PID (also when a
 * test fails). Debian's clickhouse-server 18.16 is required: a missing server fails the test with the
 * package to install, never skips it.
 */
import { spawn } from 'node:child_process';
import { existsSync, mkdirSync, mkdtempSync, rmSync, writeFileSync } from 'node:fs';
import { createServer } from 'node:net';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { setTimeout as wait } from 'node:timers/promises';

/** Debian's path; GAINLINE_CLICKHOUSE_SERVER names another build of the same version. */
export const CLICKHOUSE_SERVER = process.env.GAINLINE_CLICKHOUSE_SERVER ?? '/usr/sbin/clickhouse-server';
export const CLUSTER = 'gainline_pair';
export const TEST_USER = 'gainline_tester';

async function freePort() {
  return new Promise((resolve, reject) => {
    const server = createServer();
    server.once('error', reject);
    server.listen(0, '127.0.0.1', () => {
      const address = server.address();
      server.close(() => resolve(typeof address === 'object' && address ? address.port : 0));
    });
  });
}

function config(dir, http, tcp, shards) {
  const replicas = shards.map((port) => `<shard><replica><host>127.0.0.1</host><port>${port}</port></replica></shard>`).join('');
  return `<?xml version="1.0"?>
<yandex>
  <logger><level>warning</level><log>${dir}/server.log</log><errorlog>${dir}/server.err.log</errorlog><size>10M</size><count>1</count></logger>
  <http_port>${http}</http_port>
  <tcp_port>${tcp}</tcp_port>
  <listen_host>127.0.0.1</listen_host>
  <path>${dir}/data/</path>
  <tmp_path>${dir}/data/tmp/</tmp_path>
  <user_files_path>${dir}/data/user_files/</user_files_path>
  <format_schema_path>${dir}/data/format_schemas/</format_schema_path>
  <users_config>${dir}/users.xml</users_config>
  <default_profile>default</default_profile>
  <default_database>default</default_database>
  <mark_cache_size>67108864</mark_cache_size>
  <uncompressed_cache_size>67108864</uncompressed_cache_size>
  <remote_servers><${CLUSTER}>${replicas}</${CLUSTER}></remote_servers>
</yandex>
`;
}

function users(password) {
  return `<?xml version="1.0"?>
<yandex>
  <profiles><default></default></profiles>
  <users>
    <default><password></password><networks><ip>127.0.0.1</ip></networks><profile>default</profile><quota>default</quota></default>
    <${TEST_USER}><password>${password}</password><networks><ip>127.0.0.1</ip></networks><profile>default</profile><quota>default</quota></${TEST_USER}>
  </users>
  <quotas><default></default></quotas>
</yandex>
`;
}

export class ClickHouseCluster {
  servers = [];
  dir = mkdtempSync(join(tmpdir(), 'gainline-clickhouse-'));
  stopAtExit = () => this.killAll();

  constructor(password) {
    this.password = password;
  }

  /** Starts both servers and waits until each answers /ping. */
  async start() {
    if (!existsSync(CLICKHOUSE_SERVER)) {
      throw new Error(`${CLICKHOUSE_SERVER} not found: the ClickHouse tests need Debian's ClickHouse (apt-get install clickhouse-server clickhouse-client)`);
    }
    process.once('exit', this.stopAtExit);
    const ports = [await freePort(), await freePort(), await freePort(), await freePort()];
    const tcp = [ports[1], ports[3]];
    for (let i = 0; i < 2; i++) {
      const dir = join(this.dir, `server-${i}`);
      mkdirSync(join(dir, 'data'), { recursive: true });
      writeFileSync(join(dir, 'config.xml'), config(dir, ports[2 * i], tcp[i], tcp));
      writeFileSync(join(dir, 'users.xml'), users(this.password));
      const child = spawn(CLICKHOUSE_SERVER, [`--config-file=${join(dir, 'config.xml')}`], { cwd: dir, stdio: ['ignore', 'ignore', 'pipe'] });
      let errors = '';
      child.stderr?.on('data', (b) => void (errors += b.toString()));
      this.servers.push({ httpPort: ports[2 * i], tcpPort: tcp[i], process: child });
      await this.waitReady(ports[2 * i], child, () => errors);
    }
  }

  async waitReady(port, child, errors) {
    for (let attempt = 0; attempt < 300; attempt++) {
      if (child.exitCode !== null) throw new Error(`clickhouse-server exited with ${child.exitCode}: ${errors().slice(-500)}`);
      try {
        const r = await fetch(`http://127.0.0.1:${port}/ping`);
        if (r.ok) return;
      } catch {
        // not listening yet
      }
      await wait(100);
    }
    throw new Error(`clickhouse-server on port ${port} did not answer within 30 s: ${errors().slice(-500)}`);
  }

  /** Runs a statement on server i as the default user; the body is sent after the query (INSERT data). */
  async run(i, sql, body, settings = {}) {
    const params = new URLSearchParams({ query: sql, ...settings });
    const r = await fetch(`http://127.0.0.1:${this.servers[i].httpPort}/?${params}`, { method: 'POST', body: body ?? '', duplex: 'half' });
    const text = await r.text();
    if (!r.ok) throw new Error(`server ${i}: ${text}`);
    return text;
  }

  /** Stops every server by PID and removes the folder. */
  async stop() {
    process.removeListener('exit', this.stopAtExit);
    await Promise.all(this.servers.map((s) => new Promise((resolve) => {
      if (s.process.exitCode !== null || s.process.signalCode !== null) return resolve();
      s.process.once('exit', () => resolve());
      s.process.kill('SIGTERM');
    })));
    rmSync(this.dir, { recursive: true, force: true });
  }

  killAll() {
    for (const s of this.servers) if (s.process.exitCode === null && s.process.pid !== undefined) s.process.kill('SIGKILL');
  }
}
