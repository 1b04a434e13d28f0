import { useMutation, useQuery, useQueryClient } from "@tanstack/react-query";
import type { MailMessage } from "@jogwright/shared";
import { outboxKeys, outboxQueryOptions, retryMail } from "../api/outbox-api.ts";

export const useOutbox = () => useQuery(outboxQueryOptions());

export function useRetryMail() {
  const queryClient = useQueryClient();
  return useMutation({
    mutationFn: (id: number) => retryMail(id),
    onSuccess: (message) => {
      queryClient.setQueryData<MailMessage[]>(outboxKeys.lists(), (list) => list?.map((m) => (m.id === message.id ? message : m)));
      return queryClient.invalidateQueries({ queryKey: outboxKeys.all });
    },
  });
}
