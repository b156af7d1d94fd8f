import type { ChildProcess } from 'node:child_process';

export const CLICKHOUSE_SERVER: string;
export const CLUSTER: string;
export const TEST_USER: string;

export interface ServerHandle {
  readonly httpPort: number;
  readonly tcpPort: number;
  readonly process: ChildProcess;
}

export class ClickHouseCluster {
  constructor(password: string);
  readonly password: string;
  readonly servers: ServerHandle[];
  start(): Promise<void>;
  /** Runs a statement on server i as the default user; the body (a string or a stream) follows the query. */
  run(i: number, sql: string, body?: string | ReadableStream | NodeJS.ReadableStream, settings?: Record<string, string>): Promise<string>;
  stop(): Promise<void>;
}
