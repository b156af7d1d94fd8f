/**
 * What the shell needs of a screen. A screen is one file under screens/ plus one row of the tab table
 * (tabs.ts); the shell creates the screens its mode lists, hands each new result to `load`, and a
 * picked query to every screen that shows queries.
 */
import type { CompareOverviewModel, OverviewModel, SeriesOverviewModel } from '../../../extension/protocol/messages';
import type { AppContext } from './context';

/** A result from the host: one run's overview, a comparison, or a training series. */
export type LoadedView =
  | { readonly mode: 'single'; readonly overview: OverviewModel }
  | { readonly mode: 'compare'; readonly compare: CompareOverviewModel }
  | { readonly mode: 'series'; readonly series: SeriesOverviewModel };

export interface Screen {
  readonly element: HTMLElement;
  /** New data; `keep` on a live refresh (keep sort, filters, the active row). */
  load?(data: LoadedView, keep: boolean): void;
  /** Show this query (the user picked it here or on another screen). */
  showQuery?(query: string): void | Promise<void>;
  /** Forget the query shown (new data without a selection). */
  clearQuery?(): void;
}

export type ViewModeName = LoadedView['mode'];

export interface TabSpec<Name extends string = string> {
  readonly name: Name;
  readonly label: string;
  /** Codicon name. */
  readonly icon: string;
  /** Modes whose tab bar lists this screen; the order of the table is the order of the tabs. */
  readonly modes: readonly ViewModeName[];
  /** The panel gives the screen its whole height (grids that scroll inside). */
  readonly fill?: boolean;
  /** A count shown on the tab. */
  readonly badge?: (data: LoadedView) => string | undefined;
  readonly create: (ctx: AppContext) => Screen;
}
