import "server-only";
import type { EnginePool } from "@/lib/mechanics/worker";
import { AppError, type ErrorCode } from "@/lib/errors";

/**
 * One worker pool per server process, created on first use and kept on
 * globalThis so development reloads reuse its threads instead of leaking them.
 * A pool that cannot start becomes the given AppError (a 503), never a crash.
 */
export function lazyPool(options: { key: string; create: () => EnginePool; code: ErrorCode; message: string; name: string }) {
  const store = globalThis as unknown as Record<string, EnginePool | undefined>;
  return {
    get(): EnginePool {
      let pool = store[options.key];
      if (!pool) {
        try {
          pool = options.create();
        } catch (error) {
          console.error(`[holonomy] ${options.name} pool could not start:`, error instanceof Error ? error.message : error);
          throw new AppError(options.code, options.message, { cause: error });
        }
        store[options.key] = pool;
      }
      return pool;
    },
    /** Stops the pool's threads (tests and scripts). */
    async close(): Promise<void> {
      const pool = store[options.key];
      store[options.key] = undefined;
      await pool?.close();
    },
  };
}
