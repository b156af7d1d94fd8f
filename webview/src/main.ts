/**
 * Webview entry (bundled to dist/webview.js). Registers the few toolkit components used, applies the
 * stylesheet, starts the theme watcher for charts and mounts the app.
 */
import '@vscode-elements/elements/dist/vscode-progress-ring/index.js';
import '@vscode-elements/elements/dist/vscode-badge/index.js';
import { App } from './app';
import { watchTheme } from './ui/charts';
import { applyStyles } from './ui/styles';

applyStyles();
watchTheme();
new App(acquireVsCodeApi()).mount(document.body);
