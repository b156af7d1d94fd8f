/**
 * Webview entry (bundled to dist/webview.js). Registers the few toolkit components used, applies the
 * stylesheet, starts the theme watcher for charts and mounts the app.
 */
import '@vscode-elements/elements/dist/vscode-progress-ring/index.js';
import '@vscode-elements/elements/dist/vscode-badge/index.js';
import { App } from './app';
import { watchTheme } from './ui/charts';
import { applyStyles } from './ui/styles';

// Marks for the first screen's timeline (the end-to-end suite reads them from the page).
performance.mark('gainline-script');
applyStyles();
watchTheme();
new App(acquireVsCodeApi()).mount(document.body);
