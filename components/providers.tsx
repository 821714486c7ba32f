"use client";

// First, before any schema parses in the browser (see the module).
import "@/lib/validation/zod-config";
import { QueryClient, QueryClientProvider } from "@tanstack/react-query";
import { useState, type ReactNode } from "react";
import { AppError } from "@/lib/errors";
import { CurrentTeamProvider } from "./current-team";
import { ShortcutsProvider } from "./shortcuts";

export function Providers({ children }: { children: ReactNode }) {
  const [queryClient] = useState(
    () =>
      new QueryClient({
        defaultOptions: {
          queries: {
            staleTime: 15_000,
            // Retrying a refusal or a missing resource cannot help.
            retry: (failures, error) => !(error instanceof AppError && error.status < 500) && failures < 2,
          },
        },
      }),
  );
  return (
    <QueryClientProvider client={queryClient}>
      <ShortcutsProvider>
        <CurrentTeamProvider>{children}</CurrentTeamProvider>
      </ShortcutsProvider>
    </QueryClientProvider>
  );
}
