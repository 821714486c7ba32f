"use client";

import { createContext, useContext, type ReactNode } from "react";

/** The server's upload limits (from its settings), so the browser can state them and refuse a file that exceeds them. */
export interface UploadLimits {
  csvBytes: number;
  imageBytes: number;
}

// The server's defaults, for tests and pages that do not pass their own.
const DEFAULT_UPLOAD_LIMITS: UploadLimits = { csvBytes: 10 * 1024 * 1024, imageBytes: 5 * 1024 * 1024 };

const Context = createContext<UploadLimits>(DEFAULT_UPLOAD_LIMITS);

export function UploadLimitsProvider({ limits, children }: { limits: UploadLimits | undefined; children: ReactNode }) {
  return <Context.Provider value={limits ?? DEFAULT_UPLOAD_LIMITS}>{children}</Context.Provider>;
}

export function useUploadLimits(): UploadLimits {
  return useContext(Context);
}
