import { Sequelize } from "sequelize";

/** One Sequelize instance on MariaDB; times are stored in UTC. */
export function createSequelize(databaseUrl: string): Sequelize {
  const url = new URL(databaseUrl);
  url.protocol = "mariadb:";
  return new Sequelize(url.toString(), {
    dialect: "mariadb",
    logging: false,
    timezone: "+00:00",
    dialectOptions: { connectTimeout: 5000 },
    pool: { max: 10, min: 0, idle: 10_000, acquire: 10_000 },
    define: { underscored: true },
  });
}

/** A short sentence for a failed connection: the host and the driver's reason, no stack. */
export function describeConnectionError(databaseUrl: string, error: unknown): string {
  const url = new URL(databaseUrl);
  const cause = (error as { parent?: { message?: string }; original?: { message?: string }; message?: string }) ?? {};
  const reason = (cause.parent?.message ?? cause.original?.message ?? cause.message ?? String(error)).split("\n")[0];
  return `cannot reach the database at ${url.hostname}:${url.port || 3306}/${url.pathname.slice(1)} — ${reason}`;
}
