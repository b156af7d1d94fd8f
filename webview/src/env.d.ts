/** CSS files are bundled as text (build.mjs loader) and applied as a constructed stylesheet. */
declare module '*.css' {
  const text: string;
  export default text;
}

interface VsCodeWebviewApi {
  postMessage(message: unknown): void;
  getState(): unknown;
  setState(state: unknown): void;
}

declare function acquireVsCodeApi(): VsCodeWebviewApi;
