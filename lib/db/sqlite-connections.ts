import { PrismaBetterSqlite3 } from "@prisma/adapter-better-sqlite3";

/**
 * The SQLite driver adapter of the server: one connection that writes and one that reads.
 *
 * Prisma's better-sqlite3 adapter keeps a single connection and runs every query on it, so a query
 * sent while another request's interactive transaction is open runs inside that transaction: a
 * read sees rows that may never be committed, and a write is undone if that transaction rolls
 * back, after its own request was told it succeeded. Here:
 *
 * - every transaction and every write outside one takes the write connection in turn (an
 *   asynchronous queue, so a write waiting for a long upload to commit waits without failing and
 *   without blocking the event loop); transactions begin IMMEDIATE, so one that must wait for
 *   another process's write lock waits at its start (busy timeout) instead of failing on its
 *   first write;
 * - a SELECT outside a transaction runs on the read connection, which in WAL mode sees the last
 *   committed state and is never blocked by the writer.
 *
 * An in-memory database cannot be shared between connections: there everything takes the write
 * connection in turn.
 */

type Adapter = Awaited<ReturnType<PrismaBetterSqlite3["connect"]>>;
type Query = Parameters<Adapter["queryRaw"]>[0];
type Transaction = Awaited<ReturnType<Adapter["startTransaction"]>>;
type IsolationLevel = Parameters<Adapter["startTransaction"]>[0];

export interface SqliteConnectionOptions {
  /** The database file, or ":memory:". */
  path: string;
  /** How long a connection waits for another process's lock before SQLITE_BUSY. */
  busyTimeoutMs: number;
}

/** A statement that can only read: SQLite's SELECT never writes (no function we register has side effects). */
const READ_ONLY = /^\s*SELECT\b/i;

/** Hands the write connection to one holder at a time, in the order they asked. */
class WriteTurns {
  private tail: Promise<void> = Promise.resolve();

  /** Resolves with the release function once it is the caller's turn. */
  take(): Promise<() => void> {
    let release!: () => void;
    const turn = new Promise<void>((resolve) => (release = resolve));
    const ready = this.tail.then(() => {
      let released = false;
      return () => {
        if (released) return;
        released = true;
        release();
      };
    });
    this.tail = this.tail.then(() => turn);
    return ready;
  }

  async run<T>(work: () => Promise<T>): Promise<T> {
    const release = await this.take();
    try {
      return await work();
    } finally {
      release();
    }
  }
}

class SplitConnectionAdapter {
  readonly provider = "sqlite" as const;
  readonly adapterName: string;
  private readonly turns = new WriteTurns();

  constructor(
    private readonly writer: Adapter,
    private readonly reader: Adapter | null,
  ) {
    this.adapterName = writer.adapterName;
  }

  queryRaw(query: Query) {
    if (this.reader && READ_ONLY.test(query.sql)) return this.reader.queryRaw(query);
    return this.turns.run(() => this.writer.queryRaw(query));
  }

  executeRaw(query: Query) {
    return this.turns.run(() => this.writer.executeRaw(query));
  }

  executeScript(script: string) {
    return this.turns.run(() => this.writer.executeScript(script));
  }

  async startTransaction(isolationLevel?: IsolationLevel): Promise<Transaction> {
    if (isolationLevel && isolationLevel !== "SERIALIZABLE") {
      throw new Error(`SQLite transactions are always SERIALIZABLE; ${isolationLevel} was asked for`);
    }
    const release = await this.turns.take();
    const writer = this.writer;
    try {
      await writer.executeRaw({ sql: "BEGIN IMMEDIATE", args: [], argTypes: [] });
    } catch (error) {
      release();
      throw error;
    }
    // Prisma sends COMMIT or ROLLBACK through executeRaw, then calls commit() or rollback(). When
    // COMMIT itself fails (a full disk) it calls only rollback(), so rollback() makes sure the
    // transaction is closed before the next holder gets the connection (a second ROLLBACK fails
    // harmlessly with "no transaction is active").
    const rollback = { sql: "ROLLBACK", args: [], argTypes: [] };
    return {
      provider: this.provider,
      adapterName: this.adapterName,
      options: { usePhantomQuery: false },
      queryRaw: (query) => writer.queryRaw(query),
      executeRaw: (query) => writer.executeRaw(query),
      commit: async () => release(),
      rollback: async () => {
        await writer.executeRaw(rollback).catch(() => undefined);
        release();
      },
      createSavepoint: async (name) => void (await writer.executeRaw({ sql: `SAVEPOINT ${name}`, args: [], argTypes: [] })),
      rollbackToSavepoint: async (name) => void (await writer.executeRaw({ sql: `ROLLBACK TO ${name}`, args: [], argTypes: [] })),
      releaseSavepoint: async (name) => void (await writer.executeRaw({ sql: `RELEASE SAVEPOINT ${name}`, args: [], argTypes: [] })),
    };
  }

  async dispose(): Promise<void> {
    await this.turns.run(async () => {
      await this.reader?.dispose();
      await this.writer.dispose();
    });
  }
}

/** The adapter factory Prisma's SQLite client is given (see createDb). */
export class SqliteConnections {
  readonly provider = "sqlite" as const;
  readonly adapterName: string;
  private readonly factory: PrismaBetterSqlite3;

  constructor(private readonly options: SqliteConnectionOptions) {
    this.factory = new PrismaBetterSqlite3({ url: options.path, timeout: options.busyTimeoutMs });
    this.adapterName = this.factory.adapterName;
  }

  async connect() {
    const writer = await this.factory.connect();
    if (this.options.path === ":memory:") return new SplitConnectionAdapter(writer, null);
    // WAL lets the reader see the last commit while the writer works; the setting persists in the file.
    await writer.executeScript("PRAGMA journal_mode = WAL");
    const reader = await this.factory.connect();
    return new SplitConnectionAdapter(writer, reader);
  }
}
