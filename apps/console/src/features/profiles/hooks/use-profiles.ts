import { useMutation, useQuery, useQueryClient } from "@tanstack/react-query";
import type { CreateProfileInput, SaveVersionInput } from "@jogwright/shared";
import { createProfile, saveVersion, submitVersion } from "../api/profiles-api.ts";
import {
  operatorListQueryOptions,
  profileDetailQueryOptions,
  profileKeys,
  profileListQueryOptions,
  versionDetailQueryOptions,
  versionKeys,
} from "../../../lib/queries/profiles.ts";
import { reviewKeys } from "../../reviews/api/reviews-api.ts";
import { auditKeys } from "../../audit/api/audit-api.ts";

export const useProfiles = () => useQuery(profileListQueryOptions());
export const useProfile = (profileId: number) => useQuery(profileDetailQueryOptions(profileId));
export const useOperators = (enabled = true) => useQuery({ ...operatorListQueryOptions(), enabled });
export const useVersionDetail = (versionId: number) => useQuery(versionDetailQueryOptions(versionId));

/** After anything that creates or moves a version: profiles, versions, the review queue and the audit trail. */
export function useInvalidateProfiles() {
  const queryClient = useQueryClient();
  return () =>
    Promise.all([
      queryClient.invalidateQueries({ queryKey: profileKeys.all }),
      queryClient.invalidateQueries({ queryKey: versionKeys.all }),
      queryClient.invalidateQueries({ queryKey: reviewKeys.all }),
      queryClient.invalidateQueries({ queryKey: auditKeys.all }),
    ]);
}

export function useCreateProfile() {
  const invalidate = useInvalidateProfiles();
  return useMutation({ mutationFn: (input: CreateProfileInput) => createProfile(input), onSuccess: () => invalidate() });
}

export function useSaveVersion(profileId: number) {
  const invalidate = useInvalidateProfiles();
  return useMutation({
    mutationFn: (input: SaveVersionInput) => saveVersion(profileId, input),
    // On 409 stale_parent too: the newer version must show up in the history.
    onSettled: () => invalidate(),
  });
}

export function useSubmitVersion() {
  const invalidate = useInvalidateProfiles();
  return useMutation({ mutationFn: (versionId: number) => submitVersion(versionId), onSuccess: () => invalidate() });
}
