// Starting and keeping the language server (dist/server.js) for `.loop` documents. A server that
// fails to start, crashes or answers with errors never takes the extension down: features that
// need it say so, and the rest (colouring, snippets, brackets) keep working.
import * as vscode from 'vscode';
import { existsSync } from 'node:fs';
import { SERVER_NODE_FLAGS } from '../../language/src/protocol';
import {
  CloseAction,
  ErrorAction,
  LanguageClient,
  State,
  TransportKind,
  type CloseHandlerResult,
  type ErrorHandler,
  type ErrorHandlerResult,
  type LanguageClientOptions,
  type ServerOptions,
} from 'vscode-languageclient/node';

export const LANGUAGE_ID = 'loop';
const MAX_RESTARTS = 4;
const RESTART_WINDOW_MS = 3 * 60 * 1000;

/** Settings the server reads at start; it pulls changes through workspace/configuration. */
export function currentSettings(): Record<string, unknown> {
  const c = vscode.workspace.getConfiguration('loopwright');
  return {
    tolerance: c.get<number>('tolerance'),
    method: c.get<string>('method'),
    plot: { pointBudget: c.get<number>('plot.pointBudget') },
    run: { timeBudgetMs: c.get<number>('run.timeBudgetMs') },
    live: { enabled: c.get<boolean>('live.enabled') },
  };
}

/** Restarts a crashed server a few times, then stays down with a message instead of looping. */
class RestartLimiter implements ErrorHandler {
  private crashes: number[] = [];
  constructor(private readonly log: () => vscode.LogOutputChannel | undefined) {}

  error(error: Error, _message: unknown, count: number | undefined): ErrorHandlerResult {
    this.log()?.error(`Connection error: ${error.message}`);
    return { action: (count ?? 0) < 5 ? ErrorAction.Continue : ErrorAction.Shutdown, handled: true };
  }

  closed(): CloseHandlerResult {
    const now = Date.now();
    this.crashes = this.crashes.filter((t) => now - t < RESTART_WINDOW_MS);
    this.crashes.push(now);
    if (this.crashes.length <= MAX_RESTARTS) {
      this.log()?.warn(`The Loopwright server stopped; restarting (${this.crashes.length}/${MAX_RESTARTS}).`);
      return { action: CloseAction.Restart, handled: true };
    }
    return {
      action: CloseAction.DoNotRestart,
      message: 'The Loopwright language server stopped several times and will not be restarted. Reload the window to try again; see the "Loopwright" output for details.',
    };
  }
}

type NotificationHandler = (params: unknown) => void;

export class ServerConnection implements vscode.Disposable {
  private client: LanguageClient | undefined;
  private starting: Promise<LanguageClient | undefined> | undefined;
  readonly output: vscode.LogOutputChannel;
  private readonly handlers: Array<[string, NotificationHandler]> = [];
  private readonly runningEmitter = new vscode.EventEmitter<void>();
  /** The server is (again) running: a fresh server knows nothing of what the client told the old one. */
  readonly onDidStart = this.runningEmitter.event;

  constructor(private readonly context: vscode.ExtensionContext) {
    this.output = vscode.window.createOutputChannel('Loopwright', { log: true });
  }

  get serverPath(): string {
    return this.context.asAbsolutePath('dist/server.js');
  }

  /** The running client, started on first use; undefined when the server cannot run. */
  ready(): Promise<LanguageClient | undefined> {
    if (this.client?.state === State.Running) return Promise.resolve(this.client);
    if (!this.starting) this.starting = this.start().finally(() => (this.starting = undefined));
    return this.starting;
  }

  private async start(): Promise<LanguageClient | undefined> {
    if (this.client) {
      if (this.client.state === State.Running) return this.client;
      // A client that stopped for good: start a fresh one rather than reusing its state.
      await this.client.dispose().catch(() => undefined);
      this.client = undefined;
    }
    if (!existsSync(this.serverPath)) {
      this.output.error(`Language server not found at ${this.serverPath}.`);
      return undefined;
    }
    const module = this.serverPath;
    const serverOptions: ServerOptions = {
      run: { module, transport: TransportKind.ipc, options: { execArgv: [...SERVER_NODE_FLAGS] } },
      debug: { module, transport: TransportKind.ipc, options: { execArgv: [...SERVER_NODE_FLAGS, '--nolazy', '--inspect=6011'] } },
    };
    const clientOptions: LanguageClientOptions = {
      documentSelector: [
        { scheme: 'file', language: LANGUAGE_ID },
        { scheme: 'untitled', language: LANGUAGE_ID },
      ],
      outputChannel: this.output,
      // The server reads settings at start and again on each change notification.
      synchronize: { configurationSection: 'loopwright' },
      initializationOptions: () => ({ trusted: vscode.workspace.isTrusted, settings: currentSettings() }),
      errorHandler: new RestartLimiter(() => this.output),
      initializationFailedHandler: (error) => {
        this.output.error(`The Loopwright server failed to initialize: ${error instanceof Error ? error.message : String(error)}`);
        return false;
      },
    };
    const client = new LanguageClient('loopwright', 'Loopwright', serverOptions, clientOptions);
    this.client = client;
    for (const [method, handler] of this.handlers) client.onNotification(method, handler);
    client.onDidChangeState((e) => {
      if (e.newState === State.Running && this.client === client) this.runningEmitter.fire();
    });
    try {
      await client.start();
      return client;
    } catch (error) {
      this.output.error(`The Loopwright server did not start: ${error instanceof Error ? error.message : String(error)}`);
      return undefined;
    }
  }

  /** Handles a notification from the server, on this client and on any later one. */
  handle(method: string, handler: NotificationHandler): vscode.Disposable {
    const guarded: NotificationHandler = (params) => {
      try {
        handler(params);
      } catch (error) {
        this.output.error(`Handling ${method} failed: ${error instanceof Error ? error.message : String(error)}`);
      }
    };
    const entry: [string, NotificationHandler] = [method, guarded];
    this.handlers.push(entry);
    const sub = this.client?.onNotification(method, guarded);
    return new vscode.Disposable(() => {
      const i = this.handlers.indexOf(entry);
      if (i >= 0) this.handlers.splice(i, 1);
      sub?.dispose();
    });
  }

  /** Sends a notification if the server runs; a server that is down misses nothing it needs later. */
  async notify(method: string, params: unknown): Promise<void> {
    const client = this.client;
    if (client?.state !== State.Running) return;
    try {
      await client.sendNotification(method, params);
    } catch (error) {
      this.output.warn(`Could not send ${method}: ${error instanceof Error ? error.message : String(error)}`);
    }
  }

  async dispose(): Promise<void> {
    const client = this.client;
    this.client = undefined;
    if (client) await client.dispose(2000).catch(() => undefined);
    this.runningEmitter.dispose();
    this.output.dispose();
  }
}
