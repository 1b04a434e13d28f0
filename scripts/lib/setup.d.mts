// Types for the parts of setup.mjs that TypeScript code uses (the fault tests start a MariaDB of their own).
export const DATA_DIR: string;
export interface PrivateMariadb {
  runtimeUrl: string;
  migrationUrl: string;
  url: string;
  socket: string;
  owned: boolean;
  stop(): Promise<void>;
}
export function startPrivateMariadb(options: { name: string; port: number; database: string }): Promise<PrivateMariadb>;
export function recreateDatabase(socket: string, database: string): void;
export function startPrivateRedis(options: { name: string; port: number }): Promise<{ url: string; stop(): Promise<void> }>;
