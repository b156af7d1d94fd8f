/** The headline metric of the view in front, in the status bar; the tooltip names the conventions. */
import * as vscode from 'vscode';
import { formatHeadline } from './exportTable';
import type { Headline } from './viewSession';

export class HeadlineStatus implements vscode.Disposable {
  private readonly item = vscode.window.createStatusBarItem('gainline.headline', vscode.StatusBarAlignment.Right, 100);

  constructor() {
    this.item.name = 'Gainline headline metric';
  }

  show(headline: Headline | undefined): void {
    if (!headline) {
      this.item.hide();
      return;
    }
    this.item.text = `$(graph) ${formatHeadline(headline.label, headline.value, headline.compare)}`;
    const tooltip = new vscode.MarkdownString();
    tooltip.appendText(`${headline.compare ? 'Paired queries' : 'Queries'}: ${headline.queries}\n\n`);
    tooltip.appendText(`Conventions: ${headline.conventions}`);
    this.item.tooltip = tooltip;
    this.item.show();
  }

  dispose(): void {
    this.item.dispose();
  }
}
