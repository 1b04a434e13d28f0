import type { Sequelize } from "sequelize";
import { QueryTypes } from "sequelize";

/**
 * Exact row counts of every table in the test file's database, for the fuzz suites' "nothing half-written"
 * check (issue 11): a refused request or frame must leave every count as it was. COUNT(*) rather than
 * information_schema's table_rows, which InnoDB only estimates.
 */
export async function rowCounts(owner: Sequelize): Promise<Record<string, number>> {
  const tables = await owner.query<{ name: string }>(
    "SELECT table_name AS name FROM information_schema.tables WHERE table_schema = DATABASE() AND table_type = 'BASE TABLE' ORDER BY table_name",
    { type: QueryTypes.SELECT },
  );
  const counts: Record<string, number> = {};
  for (const { name } of tables) {
    const [row] = await owner.query<{ n: number | string }>(`SELECT COUNT(*) AS n FROM \`${name}\``, { type: QueryTypes.SELECT });
    counts[name] = Number(row!.n);
  }
  return counts;
}

/** "table: before → after" for every table whose count changed, leaving out the tables named in `except`. */
export function changedCounts(before: Record<string, number>, after: Record<string, number>, except: readonly string[] = []): string[] {
  const names = new Set([...Object.keys(before), ...Object.keys(after)]);
  return [...names].filter((t) => !except.includes(t) && before[t] !== after[t]).map((t) => `${t}: ${before[t]} → ${after[t]}`);
}
