// The one query-key factory for recordings (read by the recordings page and the tuning bench).
import { queryOptions } from "@tanstack/react-query";
import { z } from "zod";
import { recordedFrameSchema, recordingSchema } from "@jogwright/shared";
import { apiRequest } from "../api-client.ts";
import { fetchMember, resourceKeys } from "./resource.ts";

const recordingListSchema = z.object({ recordings: z.array(recordingSchema) });
const recordingDetailSchema = z.object({ recording: recordingSchema, frames: z.array(recordedFrameSchema) });

export const recordingKeys = {
  ...resourceKeys("recordings"),
  detail: (id: number) => [...recordingKeys.all, "detail", id] as const,
};

export const recordingListQueryOptions = () =>
  queryOptions({
    queryKey: recordingKeys.lists(),
    queryFn: fetchMember("/api/recordings", recordingListSchema, "recordings"),
    staleTime: 10_000,
  });

/** A recording with all its frames; recordings never change once ended, so this stays cached. */
export const recordingDetailQueryOptions = (id: number) =>
  queryOptions({
    queryKey: recordingKeys.detail(id),
    queryFn: ({ signal }) => apiRequest(`/api/recordings/${id}`, { schema: recordingDetailSchema, signal }),
    staleTime: 5 * 60_000,
  });
