import { keepPreviousData, queryOptions } from "@tanstack/react-query";
import { z } from "zod";
import { auditEntrySchema } from "@jogwright/shared";
import { apiRequest } from "../../../lib/api-client.ts";
import { auditKeys, type AuditFilters } from "../../../lib/queries/audit.ts";

export const AUDIT_ENTITIES = auditEntrySchema.shape.entity.options;

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

export const auditPageQueryOptions = (filters: AuditFilters) =>
  queryOptions({
    queryKey: auditKeys.page(filters),
    queryFn: ({ signal }) => apiRequest(`/api/audit?${auditSearchParams(filters)}`, { schema: auditPageSchema, signal }),
    placeholderData: keepPreviousData,
    staleTime: 10_000,
  });

export const auditExportHref = (filters: AuditFilters) => `/api/audit/export.csv?${auditSearchParams(filters, false)}`;
