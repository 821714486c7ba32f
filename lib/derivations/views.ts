/**
 * What the derivation routes answer (/api/teams/[teamId]/derivations,
 * /api/derivations/[id]): types only, shared by the routes and the pages.
 */
import type { DerivationSummary } from "@/db/queries/derivations";
import type { Derivation } from "@/db/schema";
import type { Jsonified } from "@/lib/api/json";

/** One derivation with its content (GET, PATCH and POST answer `{ derivation }`). */
export type DerivationJson = Jsonified<Derivation & { ownerName?: string | null }>;

/** A row of the team's derivation list. */
export type DerivationSummaryJson = Jsonified<DerivationSummary>;

/** One page of the team's derivation list. */
export interface DerivationPageJson {
  derivations: DerivationSummaryJson[];
  page: number;
  pageSize: number;
  total: number;
}
