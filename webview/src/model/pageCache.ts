/**
 * Rows of a sorted, filtered table fetched from the host a page at a time. A change of sort or
 * filter bumps the generation, and answers for an older generation are dropped — a slow reply for
 * the previous sort must never paint into the new one.
 */

export interface PageAnswer<Row> {
  readonly total: number;
  readonly offset: number;
  readonly rows: readonly Row[];
}

export type PageFetcher<Row> = (offset: number, limit: number) => Promise<PageAnswer<Row>>;

export class PageCache<Row> {
  private generation = 0;
  private pages = new Map<number, readonly Row[]>();
  private inFlight = new Set<number>();
  /** Most recently used last, for eviction. */
  private order: number[] = [];
  private knownTotal: number | undefined;
  private lastError: string | undefined;

  constructor(
    private fetcher: PageFetcher<Row>,
    readonly pageSize: number,
    /** Called when a page arrives (or fails) for the current generation. */
    private readonly onChange: () => void,
    private readonly maxPages = 64,
  ) {}

  /** Undefined until the first page has answered. */
  get total(): number | undefined {
    return this.knownTotal;
  }

  get error(): string | undefined {
    return this.lastError;
  }

  /** Forget everything (new sort/filter/data) and fetch through `fetcher` from now on. */
  reset(fetcher?: PageFetcher<Row>): void {
    if (fetcher) this.fetcher = fetcher;
    this.generation++;
    this.pages = new Map();
    this.inFlight = new Set();
    this.order = [];
    this.knownTotal = undefined;
    this.lastError = undefined;
  }

  row(index: number): Row | undefined {
    return this.pages.get(Math.floor(index / this.pageSize))?.[index % this.pageSize];
  }

  /** Requests every missing page in the list; returns how many requests were started. */
  ensure(pages: readonly number[]): number {
    let started = 0;
    for (const page of pages) {
      if (page < 0) continue;
      if (this.pages.has(page)) {
        this.touch(page);
        continue;
      }
      if (this.inFlight.has(page)) continue;
      if (this.knownTotal !== undefined && page * this.pageSize >= this.knownTotal && page > 0) continue;
      this.inFlight.add(page);
      started++;
      const generation = this.generation;
      this.fetcher(page * this.pageSize, this.pageSize).then(
        (answer) => {
          if (generation !== this.generation) return;
          this.inFlight.delete(page);
          this.knownTotal = answer.total;
          this.lastError = undefined;
          this.pages.set(page, answer.rows);
          this.touch(page);
          this.evict();
          this.onChange();
        },
        (error: unknown) => {
          if (generation !== this.generation) return;
          this.inFlight.delete(page);
          this.lastError = error instanceof Error ? error.message : String(error);
          this.onChange();
        },
      );
    }
    return started;
  }

  /** Every row currently held, in index order (for exporting what was loaded). */
  loadedRows(): Row[] {
    const out: Row[] = [];
    for (const page of [...this.pages.keys()].sort((a, b) => a - b)) out.push(...this.pages.get(page)!);
    return out;
  }

  private touch(page: number): void {
    const at = this.order.indexOf(page);
    if (at >= 0) this.order.splice(at, 1);
    this.order.push(page);
  }

  private evict(): void {
    while (this.order.length > this.maxPages) {
      const old = this.order.shift()!;
      this.pages.delete(old);
    }
  }
}
