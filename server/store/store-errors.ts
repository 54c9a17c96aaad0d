/**
 * Faults of a store that lives in a database server (server/store/pg-store.ts).
 *
 * The SQLite store's faults (StoreFullError, LibraryOpenError, LibraryDamagedError)
 * stay beside it; these two are about a server reached over the network.
 */

/**
 * The database server cannot be reached when the store is opened (refused, no
 * such host, timed out, authentication refused, no such database). The message
 * names the host and port (never the password); the caller prints it and exits.
 */
export class StoreConnectError extends Error {
  constructor(
    message: string,
    /** Host (or socket directory) and port, as the message names them. */
    readonly target: string,
  ) {
    super(message);
    this.name = 'StoreConnectError';
  }
}

/**
 * The database server was lost while this process ran (connection refused,
 * reset or ended, the server shutting down or restarting). Every call made while
 * it is away rejects with this error; the operation that met it was one
 * transaction, rolled back by the server, so nothing of it was written, unless
 * the loss fell between COMMIT reaching the server and its answer reaching us,
 * in which case the write is whole (never half) and simply unacknowledged.
 * Nothing needs restarting: the pool opens new connections once the server
 * answers again. (The routes answer it with 503 and a documented code.)
 */
export class StoreUnavailableError extends Error {
  constructor(
    /** Host (or socket directory) and port of the database server. */
    readonly target: string,
    /** What the driver or the server said. */
    readonly detail: string,
  ) {
    super(`the library's database server at ${target} cannot be reached (${detail}); nothing of this request was saved`);
    this.name = 'StoreUnavailableError';
  }
}
