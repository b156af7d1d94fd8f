/** Browser entry of the harness page: reads options from the URL, starts the fake host, then the webview bundle loads. */
import { startFakeHost } from './fakeHost';

const params = new URLSearchParams(location.search);
const host = startFakeHost({
  mode: params.get('mode') === 'compare' ? 'compare' : params.get('mode') === 'series' ? 'series' : 'single',
  queries: Number(params.get('queries') ?? '500'),
  error: params.get('error') ?? undefined,
  delayMs: Number(params.get('delay') ?? '0'),
  bigItems: Number(params.get('items') ?? '0'),
  allMetrics: params.get('metrics') === 'all',
  holdDiagnostics: params.get('diagnostics') === 'held',
  sensitivityLater: params.get('sensitivity') === 'later',
});
(window as unknown as { __host: typeof host }).__host = host;
