import { useMutation, useQuery } from "@tanstack/react-query";
import type { CreateProfileInput, SaveVersionInput } from "@jogwright/shared";
import { createProfile, importVersionFile, saveVersion, submitVersion, withdrawVersion } from "../api/profiles-api.ts";
import { operatorListQueryOptions, profileDetailQueryOptions, useInvalidateProfiles } from "../../../lib/queries/profiles.ts";

export const useProfile = (profileId: number) => useQuery(profileDetailQueryOptions(profileId));
export const useOperators = (enabled = true) => useQuery({ ...operatorListQueryOptions(), enabled });

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

/** Import a version file (its JSON body) as a new draft; invalidates as a save does. */
export function useImportVersionFile(profileId: number) {
  const invalidate = useInvalidateProfiles();
  return useMutation({ mutationFn: ({ body }: { body: unknown; fileName: string }) => importVersionFile(profileId, body), onSuccess: () => invalidate() });
}

export function useWithdrawVersion() {
  const invalidate = useInvalidateProfiles();
  return useMutation({ mutationFn: ({ versionId, note }: { versionId: number; note: string }) => withdrawVersion(versionId, note), onSettled: () => invalidate() });
}

export function useSubmitVersion() {
  const invalidate = useInvalidateProfiles();
  return useMutation({ mutationFn: (versionId: number) => submitVersion(versionId), onSuccess: () => invalidate() });
}
