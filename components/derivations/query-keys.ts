// Query keys shared by the dashboard's board and its trash, so a change in one refreshes the other.
export const derivationListKey = (teamId: string) => ["teams", teamId, "derivations"] as const;
export const trashKey = (teamId: string) => ["teams", teamId, "trash"] as const;
