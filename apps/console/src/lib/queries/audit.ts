import type { AuditEntry } from "@jogwright/shared";

/**
 * The audit trail's key factory. Every mutation that writes an audit entry invalidates `auditKeys.all`, so
 * it lives here, apart from the audit page's own requests (features/audit/api).
 */

export type AuditEntity = AuditEntry["entity"];

/** The filters of GET /api/audit and /api/audit/export.csv; from/to are ISO 8601 instants. */
export interface AuditFilters {
  entity?: AuditEntity;
  action?: string;
  actorId?: string;
  from?: string;
  to?: string;
  page: number;
  pageSize: number;
}

export const auditKeys = {
  all: ["audit"] as const,
  pages: () => [...auditKeys.all, "page"] as const,
  page: (filters: AuditFilters) => [...auditKeys.pages(), filters] as const,
};
