import "server-only";
import { z } from "zod";
import { env } from "@/lib/env";
import { AppError } from "@/lib/errors";

// Reads messages captured by the local fake SMTP server (its REST API). Used only
// by the development mailbox page.

const addressSchema = z.object({ address: z.string(), name: z.string().optional() });
const messageSchema = z.object({
  id: z.string(),
  time: z.string(),
  subject: z.string().optional().default(""),
  from: z.array(addressSchema).optional().default([]),
  to: z.array(addressSchema).optional().default([]),
  text: z.string().optional().default(""),
});
export type CapturedMessage = z.infer<typeof messageSchema>;

async function mailboxGet(path: string): Promise<unknown> {
  let response: Response;
  try {
    response = await fetch(new URL(path, env.MAILBOX_API_URL), { cache: "no-store", signal: AbortSignal.timeout(3000) });
  } catch (error) {
    throw new AppError("unavailable:mailbox", "The local mail fake is not running. Start it with npm run mail:start.", { cause: error });
  }
  if (response.status === 404) throw new AppError("not_found:mailbox", "That message is gone.");
  if (!response.ok) throw new AppError("unavailable:mailbox", `The mail fake answered ${response.status}.`);
  return response.json();
}

export async function listCapturedMessages(): Promise<CapturedMessage[]> {
  const messages = z.array(messageSchema).parse(await mailboxGet("/api/email"));
  return messages.sort((a, b) => b.time.localeCompare(a.time));
}

export async function getCapturedMessage(id: string): Promise<CapturedMessage> {
  return messageSchema.parse(await mailboxGet(`/api/email/${encodeURIComponent(id)}`));
}
