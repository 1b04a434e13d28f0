import { useQuery } from "@tanstack/react-query";
import { armListQueryOptions } from "../api/arms-api.ts";

export function useArms() {
  return useQuery(armListQueryOptions());
}
