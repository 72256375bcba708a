// Talks to the built language server (dist/server.js) over stdio, as an editor would, with
// vscode-jsonrpc. One helper per feature lives in features.ts; this file only spawns, speaks
// the protocol and collects pushed diagnostics.

import { spawn, execFileSync, type ChildProcessWithoutNullStreams } from 'node:child_process';
import { existsSync, mkdirSync, rmdirSync, statSync } from 'node:fs';
import { join } from 'node:path';
import { tmpdir } from 'node:os';
import { createMessageConnection, StreamMessageReader, StreamMessageWriter, type MessageConnection } from 'vscode-jsonrpc/node';
import {
  DidChangeTextDocumentNotification,
  DidCloseTextDocumentNotification,
  DidOpenTextDocumentNotification,
  ExitNotification,
  InitializedNotification,
  InitializeRequest,
  PublishDiagnosticsNotification,
  ShutdownRequest,
  type Diagnostic,
  type InitializeResult,
  type PublishDiagnosticsParams,
  type TextDocumentContentChangeEvent,
} from 'vscode-languageserver-protocol';

export const ROOT = join(__dirname, '..', '..');
export const SERVER = join(ROOT, 'dist', 'server.js');

/** Builds dist/ once per test run (a lock directory keeps parallel test files from racing). */
export function buildOnce(): void {
  const lock = join(tmpdir(), 'loopwright-server-test-build.lock');
  const stamp = join(tmpdir(), `loopwright-server-test-build-${process.ppid}`);
  for (let i = 0; i < 600; i++) {
    try {
      mkdirSync(lock);
      break;
    } catch {
      execFileSync(process.execPath, ['-e', 'setTimeout(()=>{},100)']);
    }
  }
  try {
    if (process.env.LOOPWRIGHT_DIST_BUILT !== '1' && (!existsSync(stamp) || !existsSync(SERVER))) {
      execFileSync(process.execPath, [join(ROOT, 'scripts', 'build.mjs')], { cwd: ROOT, stdio: 'pipe' });
      mkdirSync(stamp, { recursive: true });
    }
  } finally {
    rmdirSync(lock);
  }
  if (!existsSync(SERVER) || statSync(SERVER).size === 0) throw new Error('dist/server.js was not built');
}

export interface ServerOptions {
  initializationOptions?: unknown;
}

export class Server {
  readonly proc: ChildProcessWithoutNullStreams;
  readonly conn: MessageConnection;
  readonly stderr: string[] = [];
  private readonly diags = new Map<string, PublishDiagnosticsParams[]>();
  private readonly waiters: Array<{ uri: string; version?: number; resolve: (p: PublishDiagnosticsParams) => void }> = [];
  private readonly versions = new Map<string, number>();
  private readonly notes = new Map<string, unknown[]>();
  private readonly noteWaiters = new Set<() => void>();
  exited: number | null = null;

  private constructor() {
    this.proc = spawn(process.execPath, [SERVER, '--stdio'], { cwd: ROOT });
    this.proc.stderr.on('data', (d) => this.stderr.push(String(d)));
    this.proc.on('exit', (code) => (this.exited = code ?? -1));
    this.conn = createMessageConnection(new StreamMessageReader(this.proc.stdout), new StreamMessageWriter(this.proc.stdin));
    this.conn.onNotification(PublishDiagnosticsNotification.type, (p) => {
      const list = this.diags.get(p.uri) ?? [];
      list.push(p);
      this.diags.set(p.uri, list);
      for (let i = this.waiters.length - 1; i >= 0; i--) {
        const w = this.waiters[i];
        if (w.uri === p.uri && (w.version === undefined || p.version === w.version)) {
          this.waiters.splice(i, 1);
          w.resolve(p);
        }
      }
    });
    // The server may ask for configuration or a lens refresh; answer like a plain client.
    this.conn.onRequest('workspace/configuration', (p: { items: unknown[] }) => p.items.map(() => null));
    this.conn.onRequest('workspace/codeLens/refresh', () => null);
    this.conn.onRequest('window/workDoneProgress/create', () => null);
    this.conn.onNotification((method: string, params: unknown) => {
      const list = this.notes.get(method) ?? [];
      list.push(params);
      this.notes.set(method, list);
      for (const w of [...this.noteWaiters]) w();
    });
    this.conn.listen();
  }

  static async start(opts: ServerOptions = {}): Promise<{ server: Server; init: InitializeResult }> {
    const server = new Server();
    const init = await server.conn.sendRequest(InitializeRequest.type, {
      processId: process.pid,
      rootUri: null,
      capabilities: { textDocument: { hover: { contentFormat: ['markdown'] } }, window: { workDoneProgress: true } },
      initializationOptions: opts.initializationOptions,
    });
    await server.conn.sendNotification(InitializedNotification.type, {});
    return { server, init };
  }

  /** Opens a document and resolves with its first diagnostics. */
  open(uri: string, text: string, version = 1): Promise<PublishDiagnosticsParams> {
    this.versions.set(uri, version);
    const wait = this.nextDiagnostics(uri, version);
    void this.conn.sendNotification(DidOpenTextDocumentNotification.type, { textDocument: { uri, languageId: 'loop', version, text } });
    return wait;
  }

  /** Sends one change; returns the new version. */
  change(uri: string, changes: TextDocumentContentChangeEvent[]): number {
    const version = (this.versions.get(uri) ?? 1) + 1;
    this.versions.set(uri, version);
    void this.conn.sendNotification(DidChangeTextDocumentNotification.type, { textDocument: { uri, version }, contentChanges: changes });
    return version;
  }

  close(uri: string): void {
    void this.conn.sendNotification(DidCloseTextDocumentNotification.type, { textDocument: { uri } });
  }

  nextDiagnostics(uri: string, version?: number, timeoutMs = 20_000): Promise<PublishDiagnosticsParams> {
    return new Promise((resolve, reject) => {
      const timer = setTimeout(() => reject(new Error(`no diagnostics for ${uri} v${version} within ${timeoutMs} ms`)), timeoutMs);
      this.waiters.push({
        uri,
        version,
        resolve: (p) => {
          clearTimeout(timer);
          resolve(p);
        },
      });
    });
  }

  /** Resolves with the first diagnostics message for `uri` (already received or coming) that satisfies `pred`. */
  async diagnosticsWhere(uri: string, pred: (d: Diagnostic[]) => boolean, timeoutMs = 20_000): Promise<Diagnostic[]> {
    const deadline = Date.now() + timeoutMs;
    for (;;) {
      const seen = this.diags.get(uri) ?? [];
      const hit = seen.find((p) => pred(p.diagnostics));
      if (hit) return hit.diagnostics;
      const left = deadline - Date.now();
      if (left <= 0) throw new Error(`no matching diagnostics for ${uri} within ${timeoutMs} ms`);
      await this.nextDiagnostics(uri, undefined, left).catch(() => undefined);
    }
  }

  diagnosticsOf(uri: string): Diagnostic[] {
    const list = this.diags.get(uri);
    return list?.[list.length - 1]?.diagnostics ?? [];
  }

  /** Every notification of `method` received so far (other than diagnostics), oldest first. */
  notifications<P>(method: string): P[] {
    return [...((this.notes.get(method) ?? []) as P[])];
  }

  /** Resolves with the first notification of `method` (received or coming) that satisfies `pred`. */
  notificationWhere<P>(method: string, pred: (p: P) => boolean, timeoutMs = 20_000): Promise<P> {
    return new Promise((resolve, reject) => {
      const look = () => {
        const hit = (this.notes.get(method) as P[] | undefined)?.find(pred);
        if (!hit) return false;
        clearTimeout(timer);
        this.noteWaiters.delete(check);
        resolve(hit);
        return true;
      };
      const check = () => void look();
      const timer = setTimeout(() => {
        this.noteWaiters.delete(check);
        reject(new Error(`no matching ${method} within ${timeoutMs} ms`));
      }, timeoutMs);
      if (!look()) this.noteWaiters.add(check);
    });
  }

  /** The version the next change() will give the document. */
  versionOf(uri: string): number | undefined {
    return this.versions.get(uri);
  }

  request<R>(method: string, params: unknown): Promise<R> {
    return this.conn.sendRequest(method, params) as Promise<R>;
  }

  /** Writes raw bytes to the server's stdin (for malformed-message tests). */
  writeRaw(bytes: string): void {
    this.proc.stdin.write(bytes);
  }

  async stop(): Promise<void> {
    if (this.exited === null) {
      try {
        await Promise.race([this.conn.sendRequest(ShutdownRequest.type), new Promise((r) => setTimeout(r, 2000))]);
        await this.conn.sendNotification(ExitNotification.type);
      } catch {
        // already gone
      }
      await new Promise((r) => setTimeout(r, 100));
    }
    this.conn.dispose();
    if (this.exited === null) this.proc.kill();
  }
}

/**
 * A loop whose run takes long: a fast oscillator over a long time at a tight tolerance. The
 * nominal run and a sweep of 200 more, of about 70,000 steps each (some 9 s in all here): every
 * run stays within the step limit of a run, so only a time budget or a cancel stops the job,
 * even on a much faster machine.
 */
export const SLOW_LOOP = `plant Osc {
  param k = 1 [1/s^2]
  state x [m]
  state v [m/s]
  x' = v
  v' = -k * x
}
loop Long {
  start Osc.x = 1 [m]
  simulate 800 [s] { tolerance = 1e-12, points = 1000 }
  sweep Osc.k over 0.5 [1/s^2] .. 1.5 [1/s^2] steps 200
}
`;
