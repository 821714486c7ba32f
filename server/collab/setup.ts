/** Limits and logging of the collaboration server, from the validated environment. */
import type { Env } from "@/lib/env";
import type { CollabLimits, Logger } from "./types";

export function collabLimitsFromEnv(env: Env): CollabLimits {
  return {
    maxMessageBytes: env.COLLAB_MAX_MESSAGE_BYTES,
    maxMessagesPerSecond: env.COLLAB_MAX_MESSAGES_PER_SECOND,
    unloadDelayMs: env.COLLAB_UNLOAD_DELAY_MS,
    jsonCopyDelayMs: env.COLLAB_JSON_COPY_DELAY_MS,
    jsonCopyMaxWaitMs: Math.max(env.COLLAB_JSON_COPY_DELAY_MS, 5000),
    compactEvery: 1000,
  };
}

export const consoleLogger: Logger = {
  info: (message) => console.log(`[collab] ${message}`),
  warn: (message) => console.warn(`[collab] ${message}`),
  error: (message, error) => console.error(`[collab] ${message}${error instanceof Error ? `: ${error.message}` : ""}`),
};
