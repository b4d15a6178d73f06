// Types for bin/serve.mjs, for the TypeScript tests that start it.

/** The caution printed on start: a copy of shared/caution.ts's CAUTION (test/caution.test.ts checks they match). */
export declare const CAUTION: string;
/** The Content-Security-Policy sent with every response. */
export declare const CSP: string;
/** Headers on every response, whatever its status. */
export declare const SECURITY_HEADERS: Readonly<Record<string, string>>;
/** Content types by lower-case file extension (with the dot). */
export declare const MIME_TYPES: Readonly<Record<string, string>>;

/** The content type for a file name (application/octet-stream when the extension is not known). */
export declare function mimeType(file: string): string;

export interface ServerOptions {
  /** The app folder: `/` is its index.html. */
  root: string;
  /** The folder served under /data/. */
  dataDir: string;
  /** 0 (the default) picks a free port. */
  port?: number;
  /** Default 127.0.0.1. */
  host?: string;
}

export interface RunningServer {
  /** `http://127.0.0.1:PORT/`, with the trailing slash. */
  url: string;
  /** Stops listening and drops open connections. */
  close(): Promise<void>;
}

export declare function startServer(options: ServerOptions): Promise<RunningServer>;
