import { queryOptions } from "@tanstack/react-query";
import { z } from "zod";
import { mailMessageSchema, type MailMessage } from "@jogwright/shared";
import { apiRequest } from "../../../lib/api-client.ts";
import { fetchMember, resourceKeys } from "../../../lib/queries/resource.ts";

const mailListSchema = z.object({ messages: z.array(mailMessageSchema) });
const oneMessageSchema = z.object({ message: mailMessageSchema });

export const outboxKeys = resourceKeys("mail");

export const outboxQueryOptions = () =>
  queryOptions({ queryKey: outboxKeys.lists(), queryFn: fetchMember("/api/mail", mailListSchema, "messages"), staleTime: 10_000 });

export async function retryMail(id: number): Promise<MailMessage> {
  return (await apiRequest(`/api/mail/${id}/retry`, { method: "POST", body: {}, schema: oneMessageSchema })).message;
}
