import { useMutation, useQuery, useQueryClient } from "@tanstack/react-query";
import { decideVersion, reconfirmVersion, reviewQueueQueryOptions, type DecisionInput } from "../api/reviews-api.ts";
import { ceilingKeys } from "../../../lib/queries/ceilings.ts";
import { useInvalidateProfiles } from "../../../lib/queries/profiles.ts";

export const useReviewQueue = () => useQuery(reviewQueueQueryOptions());

export function useDecideVersion(versionId: number) {
  const invalidate = useInvalidateProfiles();
  return useMutation({ mutationFn: (input: DecisionInput) => decideVersion(versionId, input), onSettled: () => invalidate() });
}

export function useReconfirmVersion(versionId: number) {
  const invalidate = useInvalidateProfiles();
  const queryClient = useQueryClient();
  return useMutation({
    mutationFn: (comment: string) => reconfirmVersion(versionId, comment),
    // The ceilings page lists flagged versions: it refetches too.
    onSettled: () => Promise.all([invalidate(), queryClient.invalidateQueries({ queryKey: ceilingKeys.all })]),
  });
}
