// Every handler runs under a guard: an exception inside one request is logged and answered with
// the handler's empty result, so one bad request never takes the server down.

import { ResponseError, LSPErrorCodes, type CancellationToken } from 'vscode-languageserver/node';

export type Logger = (message: string) => void;

let log: Logger = (m) => process.stderr.write(m + '\n');

export function setLogger(l: Logger): void {
  log = l;
}

export function logError(where: string, err: unknown): void {
  const e = err as Error;
  try {
    log(`[loopwright] ${where} failed: ${e?.stack ?? e?.message ?? String(err)}`);
  } catch {
    // logging must never throw
  }
}

/** Runs `f`; on an exception logs it and returns `empty`. A cancelled token answers as cancelled. */
export function guard<P, R>(where: string, empty: R, f: (params: P, token: CancellationToken) => R | Promise<R>) {
  return async (params: P, token: CancellationToken): Promise<R | ResponseError<void>> => {
    try {
      if (token?.isCancellationRequested) return new ResponseError(LSPErrorCodes.RequestCancelled, 'request cancelled');
      const r = await f(params, token);
      if (token?.isCancellationRequested) return new ResponseError(LSPErrorCodes.RequestCancelled, 'request cancelled');
      return r;
    } catch (err) {
      if (err instanceof ResponseError) return err;
      logError(where, err);
      return empty;
    }
  };
}

/** Same for notifications: nothing to answer, only a log line. */
export function guardNotification<P>(where: string, f: (params: P) => void): (params: P) => void {
  return (params: P) => {
    try {
      f(params);
    } catch (err) {
      logError(where, err);
    }
  };
}

/** Lets pending messages (cancellations, edits) in before heavy work continues. */
export function yieldToEventLoop(): Promise<void> {
  return new Promise((resolve) => setImmediate(resolve));
}
