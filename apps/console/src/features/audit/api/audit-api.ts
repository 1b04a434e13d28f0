import { keepPreviousData, queryOptions } from "@tanstack/react-query";
import { z } from "zod";
import { auditEntrySchema, type AuditEntry } from "@jogwright/shared";
import { apiRequest } from "../../../lib/api-client.ts";

export const AUDIT_ENTITIES = auditEntrySchema.shape.entity.options;
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

const auditPageSchema = z.object({ entries: z.array(auditEntrySchema), total: z.number().int(), page: z.number().int(), pageSize: z.number().int() });

export function auditSearchParams(filters: AuditFilters, withPaging = true): URLSearchParams {
  const params = new URLSearchParams();
  for (const key of ["entity", "action", "actorId", "from", "to"] as const) {
    const value = filters[key];
    if (value) params.set(key, value);
  }
  if (withPaging) {
    params.set("page", String(filters.page));
    params.set("pageSize", String(filters.pageSize));
  }
  return params;
}

export const auditKeys = {
  all: ["audit"] as const,
  pages: () => [...auditKeys.all, "page"] as const,
  page: (filters: AuditFilters) => [...auditKeys.pages(), filters] as const,
};

export const auditPageQueryOptions = (filters: AuditFilters) =>
  queryOptions({
    queryKey: auditKeys.page(filters),
    queryFn: ({ signal }) => apiRequest(`/api/audit?${auditSearchParams(filters)}`, { schema: auditPageSchema, signal }),
    placeholderData: keepPreviousData,
    staleTime: 10_000,
  });

export const auditExportHref = (filters: AuditFilters) => `/api/audit/export.csv?${auditSearchParams(filters, false)}`;
