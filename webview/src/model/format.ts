/** The webview's number formats are the shared presentation module's (one rule for every output). */
export * from '../../../extension/presentation/numbers';
