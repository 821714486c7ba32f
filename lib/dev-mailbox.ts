import "server-only";
import { headers } from "next/headers";
import { isLoopbackRequest } from "@/lib/client-address";
import { devMailboxEnabled } from "@/lib/env";

/**
 * The development mailbox needs no sign-in and shows every captured reset and
 * invitation link, so it is served only when enabled (development, or
 * HOLONOMY_DEV_MAILBOX=1 for the demo) and only to requests addressed to
 * localhost / 127.0.0.1 from this machine.
 */
export async function devMailboxAvailable(): Promise<boolean> {
  if (!devMailboxEnabled) return false;
  return isLoopbackRequest(await headers());
}
