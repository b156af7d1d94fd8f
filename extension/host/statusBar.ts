/**
 * The headline metric of the view in front, in the status bar. The tooltip and the screen-reader label
 * are plain text: a MarkdownString built with appendText escapes every space and bracket, which a
 * screen reader then reads out and which keeps the hover from wrapping between words.
 * A click brings the view's summary (Overview, or A vs B) to the front.
 */
import * as vscode from 'vscode';
import { formatHeadline } from './exportTable';
import type { Headline } from './viewSession';

export const SHOW_SUMMARY_COMMAND = 'gainline.showSummary';

/** "NDCG@10 0.6123 over 293 of 300 queries (7 left out …)" and the conventions, as lines. */
export function headlineLines(headline: Headline): string[] {
  const left = headline.queries - headline.counted;
  const counted = headline.compare
    ? `Queries compared: ${headline.counted} of ${headline.queries} in both runs`
    : `Queries counted: ${headline.counted} of ${headline.queries}`;
  const why = left > 0 ? ` (${left} left out of the mean: nothing relevant)` : '';
  return [
    formatHeadline(headline.label, headline.value, headline.compare),
    `${counted}${why}`,
    `Conventions: ${headline.conventions}`,
    'Click to show the summary.',
  ];
}

export class HeadlineStatus implements vscode.Disposable {
  private readonly item = vscode.window.createStatusBarItem('gainline.headline', vscode.StatusBarAlignment.Right, 100);

  constructor() {
    this.item.name = 'Gainline headline metric';
    this.item.command = { command: SHOW_SUMMARY_COMMAND, title: 'Show the summary of the Gainline view in front' };
  }

  show(headline: Headline | undefined): void {
    if (!headline) {
      this.item.hide();
      return;
    }
    const lines = headlineLines(headline);
    this.item.text = `$(graph) ${lines[0]}`;
    this.item.tooltip = lines.join('\n');
    this.item.accessibilityInformation = { label: `Gainline: ${lines.slice(0, 3).join('. ')}`, role: 'button' };
    this.item.show();
  }

  dispose(): void {
    this.item.dispose();
  }
}
