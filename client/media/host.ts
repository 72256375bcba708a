// The page's host: VS Code's webview API when present, otherwise the standalone HTML report
// (exports become downloads, state lives in memory).

import type { PageToHost, PlotState } from './messages';

interface VsCodeApi {
  postMessage(message: unknown): void;
  getState(): unknown;
  setState(state: unknown): unknown;
}

declare global {
  function acquireVsCodeApi(): VsCodeApi;
}

export interface Host {
  readonly standalone: boolean;
  post(message: PageToHost): void;
  getState(): unknown;
  setState(state: PlotState): void;
}

function download(name: string, href: string): void {
  const a = document.createElement('a');
  a.href = href;
  a.download = name;
  a.rel = 'noopener';
  document.body.append(a);
  a.click();
  a.remove();
}

export function connectHost(fileStem: () => string): Host {
  if (typeof globalThis.acquireVsCodeApi === 'function') {
    const api = acquireVsCodeApi();
    return {
      standalone: false,
      post: (m) => api.postMessage(m),
      getState: () => api.getState(),
      setState: (s) => void api.setState(s),
    };
  }
  let state: unknown;
  return {
    standalone: true,
    post(m) {
      if (m.type === 'exportCsv') {
        const url = URL.createObjectURL(new Blob([m.csv], { type: 'text/csv' }));
        download(`${fileStem()}.csv`, url);
        setTimeout(() => URL.revokeObjectURL(url), 10_000);
      } else if (m.type === 'exportPng') download(`${fileStem()}.png`, m.dataUrl);
    },
    getState: () => state,
    setState: (s) => {
      state = s;
    },
  };
}
