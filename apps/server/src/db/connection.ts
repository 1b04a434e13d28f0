import { BaseError, ConnectionError, Sequelize } from "sequelize";
import { initModels } from "./models.ts";

/**
 * How long the app waits on the database before it answers 503 `database_unavailable` (issue 11, item 5):
 * every API request must get its answer within 2 s when MariaDB is stopped or paused. Each bound is below
 * 2 s with room for the request's own work (derived, no source):
 * - connecting: a paused server still completes the TCP handshake (the kernel does) but never sends its
 *   greeting, so the driver's `connectTimeout` ends the attempt; a loopback or LAN handshake takes a few
 *   milliseconds, so 1 s is generous.
 * - waiting for a pooled connection (`acquire`): 1.5 s, after which Sequelize raises
 *   ConnectionAcquireTimeoutError; it covers a connection attempt under way and a full pool.
 * - a query on an open connection: the driver's `socketTimeout` (silence on the socket, 1.5 s) closes the
 *   connection and fails its query as fatal. MariaDB's own `max_statement_time` cannot help here: a paused
 *   server enforces nothing. Every runtime query of the app is a short OLTP statement (milliseconds), so
 *   1.5 s of silence means the server is gone, not busy.
 * Idle pooled connections are evicted after 1 s, before their socket timeout would close them, so a
 * request rarely picks up a connection at the edge of its timeout (and the pool's validation discards a
 * closed one in any case).
 */
export const DATABASE_CONNECT_TIMEOUT_MS = 1000;
export const DATABASE_ACQUIRE_TIMEOUT_MS = 1500;
export const DATABASE_QUERY_SILENCE_TIMEOUT_MS = 1500;

/**
 * One Sequelize instance on MariaDB, with its models (db/models.ts); times are stored in UTC.
 * `isSchemaOwner`: the migration account's connection, whose DDL may legitimately run silent for long
 * (an ALTER on a big table), so it has no query silence timeout.
 */
export function createSequelize(databaseUrl: string, options: { isSchemaOwner?: boolean } = {}): Sequelize {
  const url = new URL(databaseUrl);
  url.protocol = "mariadb:";
  const sequelize = new Sequelize(url.toString(), {
    dialect: "mariadb",
    logging: false,
    timezone: "+00:00",
    dialectOptions: {
      connectTimeout: DATABASE_CONNECT_TIMEOUT_MS,
      ...(options.isSchemaOwner ? {} : { socketTimeout: DATABASE_QUERY_SILENCE_TIMEOUT_MS }),
    },
    pool: { max: 10, min: 0, idle: 1000, evict: 250, acquire: DATABASE_ACQUIRE_TIMEOUT_MS },
    define: { underscored: true },
  });
  initModels(sequelize);
  return sequelize;
}

/**
 * Whether an error means the database cannot be reached or stopped answering (refused, timed out, the
 * connection lost), as opposed to an error in a statement. Sequelize raises ConnectionError (and its
 * subclasses, ConnectionAcquireTimeoutError among them) while connecting; a connection that dies under a
 * query surfaces as the driver's SqlError marked `fatal` (socket timeout, unexpected close), wrapped in a
 * DatabaseError.
 */
export function isDatabaseUnavailable(error: unknown): boolean {
  if (error instanceof ConnectionError) return true;
  if (error instanceof BaseError) {
    const cause = (error as { parent?: unknown; original?: unknown }).parent ?? (error as { original?: unknown }).original;
    return isFatalDriverError(cause);
  }
  return isFatalDriverError(error);
}

function isFatalDriverError(error: unknown): boolean {
  return typeof error === "object" && error !== null && (error as { fatal?: unknown }).fatal === true && "sqlState" in error;
}

/** A short sentence for a failed connection: the host and the driver's reason, no stack. */
export function describeConnectionError(databaseUrl: string, error: unknown): string {
  const url = new URL(databaseUrl);
  const cause = (error as { parent?: { message?: string }; original?: { message?: string }; message?: string }) ?? {};
  const reason = (cause.parent?.message ?? cause.original?.message ?? cause.message ?? String(error)).split("\n")[0];
  return `cannot reach the database at ${url.hostname}:${url.port || 3306}/${url.pathname.slice(1)} — ${reason}`;
}
