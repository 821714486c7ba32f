"use client";

import { createContext, useContext, useEffect, useState, type ReactNode } from "react";

/**
 * The team a page belongs to when its URL does not name it (a derivation's
 * notebook lives at /derivations/[id]). The page declares it with
 * <CurrentTeam>; the header's team switcher reads it.
 */
const Context = createContext<{ teamId: string | null; setTeamId: (id: string | null) => void }>({ teamId: null, setTeamId: () => undefined });

export function CurrentTeamProvider({ children }: { children: ReactNode }) {
  const [teamId, setTeamId] = useState<string | null>(null);
  return <Context.Provider value={{ teamId, setTeamId }}>{children}</Context.Provider>;
}

/** Declares the current page's team while mounted. */
export function CurrentTeam({ teamId }: { teamId: string }) {
  const { setTeamId } = useContext(Context);
  useEffect(() => {
    setTeamId(teamId);
    return () => setTeamId(null);
  }, [teamId, setTeamId]);
  return null;
}

export function useCurrentTeamId(): string | null {
  return useContext(Context).teamId;
}
