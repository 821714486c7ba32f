import "server-only";
/** The shared documents' storage in PostgreSQL (db/queries/collab.ts) behind the server's interface. */
import { appendSharedDocUpdate, compactSharedDocById, getSharedDocStateById, getSharedDocUpdatesById, loadSharedDocById } from "@/db/queries/collab";
import { updateDerivationContentById } from "@/db/queries/derivations";
import type { CollabPersistence, JsonCopyWriter } from "./types";

export const postgresPersistence: CollabPersistence = {
  load: (derivationId) => loadSharedDocById({ derivationId }),
  append: (derivationId, update, options) =>
    appendSharedDocUpdate({ derivationId, update, evenIfLocked: options?.evenIfLocked, announceAs: options?.announceAs }),
  updates: (derivationId) => getSharedDocUpdatesById({ derivationId }),
  compact: (derivationId) => compactSharedDocById({ derivationId }),
  state: (derivationId) => getSharedDocStateById({ derivationId }),
};

/**
 * The JSON copy through the one content write (updateDerivationContentById):
 * automatic revisions, pending authors and the row's title follow as for any
 * save. With no known author (a change only from a server-side write or from
 * before a restart), the derivation's last editor is named.
 */
export const postgresJsonCopy: JsonCopyWriter = {
  async write(derivationId, document, authorIds) {
    let actorId = authorIds[0];
    if (!actorId) {
      const state = await getSharedDocStateById({ derivationId });
      if (!state?.updatedById) return "skipped";
      actorId = state.updatedById;
    }
    const result = await updateDerivationContentById({
      id: derivationId,
      actorId,
      coAuthorIds: authorIds.slice(1),
      content: document,
      fromSharedDocument: true,
    });
    return result.status === "saved" ? "saved" : result.status === "locked" ? "locked" : result.status === "missing" ? "missing" : "skipped";
  },
};
