import { useMutation, useQueryClient } from "@tanstack/react-query";
import type { Ceilings } from "@jogwright/shared";
import { auditKeys } from "../../../lib/queries/audit.ts";
import { ceilingKeys } from "../../../lib/queries/ceilings.ts";
import { profileKeys, versionKeys } from "../../../lib/queries/profiles.ts";
import { updateCeilings } from "../api/ceilings-api.ts";

/** Lowering a ceiling can flag approved versions, so profiles and versions are refetched too. */
export function useUpdateCeilings() {
  const queryClient = useQueryClient();
  return useMutation({
    mutationFn: (input: { revision: number; ceilings: Ceilings; note: string }) => updateCeilings(input),
    onSuccess: (result) => {
      queryClient.setQueryData(ceilingKeys.current(), result.record);
      return Promise.all([
        queryClient.invalidateQueries({ queryKey: ceilingKeys.all }),
        queryClient.invalidateQueries({ queryKey: profileKeys.all }),
        queryClient.invalidateQueries({ queryKey: versionKeys.all }),
        queryClient.invalidateQueries({ queryKey: auditKeys.all }),
      ]);
    },
    onError: () => queryClient.invalidateQueries({ queryKey: ceilingKeys.all }),
  });
}
