/**
 * The shell: tabs, the loading / error / file-gone panels, the status line, and the routing of host
 * state to the screens. Single-run and compare mode share the bundle; the host's state says which.
 */
import type { CompareOverviewModel, ExportViewParams, HostToView, OverviewModel, SeriesOverviewModel, ViewRequests, ViewState, ViewToHost } from '../../extension/protocol/messages';
import { RequestClient } from '../../extension/channel/request';
import { formatCount } from './model/format';
import { partialOverviewElement } from './screens/partialOverview';
import { TABS, type TabName } from './tabs';
import type { AppContext } from './ui/context';
import { clear, el, icon } from './ui/dom';
import type { LoadedView, Screen } from './ui/screen';

interface SavedState {
  readonly tab?: TabName;
  readonly query?: string | null;
  /** Compare mode: the two runs' paths, so the host can bring the panel back after a reload. */
  readonly runs?: readonly [string, string];
  /** Series mode: the series' key in the Runs view, for the same reason. */
  readonly series?: string;
}

export class App implements AppContext {
  private readonly client: RequestClient<ViewRequests>;
  private readonly root = el('div', { id: 'gl-root' });
  private readonly fileLabel = el('span', { className: 'gl-file' });
  private readonly tabBar = el('div', { className: 'gl-tabs', attrs: { role: 'tablist', 'aria-label': 'Views' } });
  private readonly loading = el('div', { id: 'gl-loading', className: 'gl-state', attrs: { role: 'status', 'aria-live': 'polite' } });
  private readonly errorPanel = el('div', { id: 'gl-error', className: 'gl-state', attrs: { role: 'alert' } });
  private readonly vanished = el('div', { id: 'gl-vanished', className: 'gl-state', attrs: { role: 'alert' } });
  private readonly panels = el('div', { className: 'gl-panels' });
  private readonly status = el('div', { className: 'gl-statusline', attrs: { role: 'status', 'aria-live': 'polite' } });
  private readonly panelByTab = new Map<TabName, HTMLElement>();
  /** Created on first use, then kept (a screen keeps its state across reloads and mode switches). */
  private readonly screens = new Map<TabName, Screen>();
  private tabs: TabName[] = [];
  private tab: TabName = 'overview';
  private mode: 'single' | 'compare' | 'series' | undefined;
  /** Which panel is on screen: a 'loaded' while the content is shown repeats the load already shown. */
  private showing: 'loading' | 'error' | 'vanished' | 'content' = 'loading';
  /** The result on screen as JSON, so the host's repeat of it (its answer to 'ready') is not drawn again. */
  private shownResult: string | undefined;
  private selected: string | null = null;
  private compareModel: CompareOverviewModel | undefined;
  private restored: SavedState | undefined;
  /** Series mode: the key the host sent with the series (kept from the saved state until then). */
  private seriesKey: string | undefined;

  constructor(private readonly api: VsCodeWebviewApi) {
    this.client = new RequestClient<ViewRequests>((m) => this.post(m as ViewToHost), 60_000);
    this.restored = (api.getState() as SavedState | undefined) ?? undefined;
    this.seriesKey = this.restored?.series;
    this.errorPanel.hidden = true;
    this.vanished.hidden = true;
    this.panels.hidden = true;
    this.setLoading('Waiting for the extension…', null);
    this.root.append(el('div', { className: 'gl-topbar' }, this.tabBar, el('span', { className: 'gl-spacer' }), this.fileLabel), this.loading, this.errorPanel, this.vanished, this.panels, this.status);
    this.tabBar.addEventListener('keydown', (e) => this.onTabKey(e));
  }

  mount(parent: HTMLElement): void {
    parent.appendChild(this.root);
    window.addEventListener('message', (e: MessageEvent) => this.onMessage(e.data as HostToView));
    const early = takeEarlyMessages();
    this.post({ kind: 'ready' });
    performance.mark('gainline-ready');
    // A result that came before the bundle ran is shown now; the host's repeat after 'ready' is then
    // a repeat like any other (see onState).
    for (const message of early) this.onMessage(message);
  }

  // ---- AppContext ------------------------------------------------------------------------------

  request<K extends keyof ViewRequests>(method: K, params: ViewRequests[K]['params']): Promise<ViewRequests[K]['result']> {
    return this.client.request(method, params);
  }

  openQuery(query: string, tab?: 'detail' | 'movement'): void {
    if (this.mode === undefined) {
      // Asked before the first result arrived: show it once the result is in.
      this.restored = { tab: tab ?? 'detail', query };
      return;
    }
    const target: TabName = tab ?? (this.mode === 'compare' ? 'movement' : this.mode === 'series' ? 'trend' : 'detail');
    this.selected = query;
    this.post({ kind: 'selection', query });
    this.selectTab(target);
    // Every screen of the mode that shows a query follows the pick, whichever tab it was made for.
    this.showQueryEverywhere(query);
    this.save();
  }

  selectedQuery(): string | null {
    return this.selected;
  }

  exportTable(params: ExportViewParams): void {
    this.request('exportView', params).then(
      (r) => this.notify(r.done ? `Exported to ${r.target ?? 'file'}.` : 'Export cancelled.'),
      (e: Error) => this.notify(`Export failed: ${e.message}`, true),
    );
  }

  copyQuery(query: string, run?: 'a' | 'b'): void {
    this.request('copyQueryJson', { query, run }).then(
      (r) => this.notify(r.copied ? `Copied ${query} as JSON.` : 'Nothing was copied.'),
      (e: Error) => this.notify(`Copy failed: ${e.message}`, true),
    );
  }

  notify(text: string, isError = false): void {
    this.status.textContent = text;
    this.status.classList.toggle('gl-worse', isError);
  }

  // ---- host messages ---------------------------------------------------------------------------

  private post(message: ViewToHost): void {
    this.api.postMessage(message);
  }

  private onMessage(message: HostToView): void {
    if (!message || typeof message !== 'object') return;
    if (message.kind === 'response') {
      this.client.handleMessage(message);
      return;
    }
    if (message.kind === 'showQuery') {
      this.openQuery(message.query);
      return;
    }
    if (message.kind === 'showSummary') {
      if (this.mode !== undefined) this.selectTab(this.mode === 'compare' ? 'compare' : this.mode === 'series' ? 'trend' : 'overview');
      return;
    }
    if (message.kind === 'state') {
      try {
        this.onState(message.state);
      } catch (e) {
        // A rendering bug must not leave a blank editor: say what happened.
        this.showError(`The view could not display this result: ${(e as Error).message}`);
      }
    }
  }

  private onState(state: ViewState): void {
    switch (state.status) {
      case 'loading': {
        const pct = state.fraction === null ? '' : ` ${Math.round(state.fraction * 100)}%`;
        this.setLoading(`${state.message}${pct}`, state.fraction, state.label);
        if (state.partial) {
          (this.loading.lastElementChild ?? this.loading).append(partialOverviewElement(state.partial));
          // The end-to-end suite checks that a partial overview came before the full one.
          if (performance.getEntriesByName('gainline-partial').length === 0) performance.mark('gainline-partial');
        }
        return;
      }
      case 'error':
        this.showError(state.message);
        return;
      case 'vanished':
        this.show('vanished');
        clear(this.vanished);
        this.vanished.append(icon('warning'), el('div', {}, el('strong', { text: 'The file is gone. ' }), el('span', { text: `${state.path} was deleted or moved; the view will update if it comes back.` })));
        return;
      case 'loaded':
      case 'reloaded': {
        // The host repeats its last state whenever the view says 'ready'. With the extension already
        // active, the result can reach the view before its 'ready' reaches the host, so the same
        // 'loaded' comes twice; the repeat must not throw the user back to the first tab.
        const text = JSON.stringify(state);
        if (this.showing === 'content' && text === this.shownResult) return;
        const repeat = state.status === 'loaded' && this.showing === 'content';
        const keep = (state.status === 'reloaded' || repeat) && this.mode === state.mode;
        performance.mark('gainline-result');
        if (state.mode === 'single') this.loadSingle(state.overview, keep);
        else if (state.mode === 'series') this.loadSeries(state.series, state.seriesKey, keep);
        else this.loadCompare(state.compare, keep);
        this.show('content');
        this.shownResult = text;
        performance.mark('gainline-shown');
        // The frame that paints the result (its callbacks run just before its paint).
        requestAnimationFrame(() => performance.mark('gainline-painted'));
        return;
      }
    }
  }

  private loadSingle(model: OverviewModel, keep: boolean): void {
    this.compareModel = undefined;
    this.fileLabel.textContent = `${model.file.name} — ${formatCount(model.queryCount)} queries`;
    this.fileLabel.title = model.file.path;
    this.loadScreens({ mode: 'single', overview: model }, keep);
  }

  private loadCompare(model: CompareOverviewModel, keep: boolean): void {
    this.compareModel = model;
    this.fileLabel.textContent = `${model.runA.name} ↔ ${model.runB.name}`;
    this.fileLabel.title = `A: ${model.runA.path}\nB: ${model.runB.path}`;
    this.loadScreens({ mode: 'compare', compare: model }, keep);
  }

  private loadSeries(model: SeriesOverviewModel, key: string, keep: boolean): void {
    this.compareModel = undefined;
    this.seriesKey = key;
    this.fileLabel.textContent = `${model.name} — ${formatCount(model.checkpoints.length)} checkpoints`;
    this.fileLabel.title = model.checkpoints.map((c) => c.path).join('\n');
    this.loadScreens({ mode: 'series', series: model }, keep);
  }

  /** The mode's tabs from the tab table, each screen given the new data; the first tab is home. */
  private loadScreens(data: LoadedView, keep: boolean): void {
    const first = this.mode === undefined;
    this.mode = data.mode;
    const specs = TABS.filter((t) => t.modes.includes(data.mode));
    this.buildTabs(specs.map((t) => t.name), Object.fromEntries(specs.map((t) => [t.name, t.badge?.(data)])));
    for (const spec of specs) this.screen(spec.name).load?.(data, keep);
    this.afterLoad(keep, first, specs[0]!.name);
  }

  private screen(name: TabName): Screen {
    let screen = this.screens.get(name);
    if (!screen) {
      screen = TABS.find((t) => t.name === name)!.create(this);
      this.screens.set(name, screen);
    }
    return screen;
  }

  private showQueryEverywhere(query: string): void {
    for (const name of this.tabs) void this.screen(name).showQuery?.(query);
  }

  /** Keeps the tab and the selected query on a live refresh (or after the panel was re-created). */
  private afterLoad(keep: boolean, first: boolean, home: TabName): void {
    let tab: TabName = home;
    let query: string | null = null;
    if (keep) {
      tab = this.tabs.includes(this.tab) ? this.tab : home;
      query = this.selected;
    } else if (first && this.restored) {
      tab = this.restored.tab && this.tabs.includes(this.restored.tab) ? this.restored.tab : home;
      query = this.restored.query ?? null;
    }
    this.restored = undefined;
    this.selected = query;
    for (const name of this.tabs) this.screen(name).clearQuery?.();
    if (query !== null) this.showQueryEverywhere(query);
    else if (this.mode === 'compare') void this.showBiggestMover();
    this.selectTab(tab);
    this.save();
  }

  /** A new comparison opens Movement and Query detail on the query whose headline moved most. */
  private async showBiggestMover(): Promise<void> {
    const model = this.compareModel;
    try {
      const [losses, wins] = await Promise.all([
        this.request('comparePage', { sort: { key: 'delta', descending: false }, offset: 0, limit: 1 }),
        this.request('comparePage', { sort: { key: 'delta', descending: true }, offset: 0, limit: 1 }),
      ]);
      if (model !== this.compareModel || this.selected !== null) return; // the user picked one meanwhile
      const candidates = [losses.rows[0], wins.rows[0]].filter((r) => r !== undefined && r.delta !== null);
      const biggest = candidates.sort((x, y) => Math.abs(y!.delta!) - Math.abs(x!.delta!))[0];
      if (!biggest) return;
      this.selected = biggest.query;
      this.post({ kind: 'selection', query: biggest.query });
      this.showQueryEverywhere(biggest.query);
      this.save();
    } catch {
      // Movement then keeps its "pick a query" note.
    }
  }

  // ---- layout ----------------------------------------------------------------------------------

  private setLoading(message: string, fraction: number | null, label?: string): void {
    this.show('loading');
    clear(this.loading);
    const ring = document.createElement('vscode-progress-ring');
    ring.setAttribute('aria-label', 'Computing');
    this.loading.append(ring, el('div', {}, el('div', { text: message }), label ? el('div', { className: 'gl-muted', text: label }) : null));
    if (fraction !== null) this.loading.setAttribute('aria-valuenow', String(Math.round(fraction * 100)));
  }

  private showError(message: string): void {
    this.show('error');
    clear(this.errorPanel);
    this.errorPanel.append(icon('error'), el('div', {}, el('strong', { text: 'Gainline could not show this file.' }), el('div', { className: 'gl-error-message', text: message })));
  }

  private show(which: 'loading' | 'error' | 'vanished' | 'content'): void {
    this.showing = which;
    this.loading.hidden = which !== 'loading';
    this.errorPanel.hidden = which !== 'error';
    this.vanished.hidden = which !== 'vanished';
    this.panels.hidden = which !== 'content';
    this.tabBar.hidden = which !== 'content';
  }

  private buildTabs(names: TabName[], badges: Partial<Record<TabName, string | undefined>>): void {
    this.tabs = names;
    clear(this.tabBar);
    clear(this.panels);
    this.panelByTab.clear();
    for (const name of names) {
      const info = TABS.find((t) => t.name === name)!;
      const tab = el('button', {
        id: `gl-tab-${name}`,
        className: 'gl-tab',
        attrs: { type: 'button', role: 'tab', 'aria-controls': `gl-panel-${name}`, 'aria-selected': 'false', tabindex: -1 },
      }, icon(info.icon), info.label);
      const badge = badges[name];
      if (badge) {
        const b = document.createElement('vscode-badge');
        b.textContent = badge;
        tab.appendChild(b);
      }
      tab.addEventListener('click', () => this.selectTab(name));
      this.tabBar.appendChild(tab);
      const panel = el('div', { id: `gl-panel-${name}`, className: `gl-panel${info.fill ? ' fill' : ''}`, attrs: { role: 'tabpanel', 'aria-labelledby': `gl-tab-${name}` } }, this.screen(name).element);
      panel.hidden = true;
      this.panels.appendChild(panel);
      this.panelByTab.set(name, panel);
    }
  }

  private selectTab(name: TabName): void {
    if (!this.tabs.includes(name)) return;
    this.tab = name;
    for (const t of this.tabs) {
      const header = this.tabBar.querySelector<HTMLElement>(`#gl-tab-${t}`);
      header?.setAttribute('aria-selected', String(t === name));
      header?.setAttribute('tabindex', t === name ? '0' : '-1');
      const panel = this.panelByTab.get(t);
      if (panel) panel.hidden = t !== name;
    }
    this.save();
  }

  private onTabKey(e: KeyboardEvent): void {
    const i = this.tabs.indexOf(this.tab);
    let next = -1;
    if (e.key === 'ArrowRight') next = (i + 1) % this.tabs.length;
    else if (e.key === 'ArrowLeft') next = (i - 1 + this.tabs.length) % this.tabs.length;
    else if (e.key === 'Home') next = 0;
    else if (e.key === 'End') next = this.tabs.length - 1;
    if (next < 0) return;
    e.preventDefault();
    this.selectTab(this.tabs[next]!);
    this.tabBar.querySelector<HTMLElement>(`#gl-tab-${this.tabs[next]}`)?.focus();
  }

  private save(): void {
    const runs = this.compareModel ? ([this.compareModel.runA.path, this.compareModel.runB.path] as const) : undefined;
    const series = this.seriesKey;
    this.api.setState({ tab: this.tab, query: this.selected, ...(runs ? { runs } : {}), ...(series !== undefined ? { series } : {}) } satisfies SavedState);
  }
}

/**
 * The messages kept by the page's inline script (extension/host/webviewHtml.ts, EARLY_MESSAGES) before
 * this bundle ran; taking them ends the keeping, as the app listens from now on.
 */
function takeEarlyMessages(): HostToView[] {
  const holder = window as unknown as { gainlineEarly?: HostToView[] };
  const early = holder.gainlineEarly ?? [];
  holder.gainlineEarly = undefined;
  return early;
}
