import { useMutation, useQuery } from "@tanstack/react-query";
import { decideVersion, reviewQueueQueryOptions, type DecisionInput } from "../api/reviews-api.ts";
import { useInvalidateProfiles } from "../../../lib/queries/profiles.ts";

export const useReviewQueue = () => useQuery(reviewQueueQueryOptions());

export function useDecideVersion(versionId: number) {
  const invalidate = useInvalidateProfiles();
  return useMutation({ mutationFn: (input: DecisionInput) => decideVersion(versionId, input), onSettled: () => invalidate() });
}
