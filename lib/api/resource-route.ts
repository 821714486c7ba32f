import "server-only";
import { getFileById } from "@/db/queries/files";
import { getSimulationRunByIdAndDerivationId } from "@/db/queries/runs";
import type { SimulationRun, StoredFile } from "@/db/schema";
import { loadDerivationFor, loadTeamFor, type DerivationAccess, type TeamAccess } from "@/lib/auth/access";
import type { Action } from "@/lib/auth/permissions";
import { requireUser, type SessionUser } from "@/lib/auth/session";
import { AppError } from "@/lib/errors";
import { uuidField } from "@/lib/validation/fields";
import { apiRoute } from "./route";

// One wrapper per resource, so a handler holds only its own logic. Each runs
// the same steps in the same order: the session (401), the id (a malformed id
// names nothing: 404, like a missing row or another team's), the caller's
// membership and the action (lib/auth/access.ts, 404 or 403), then the row.
// Everything thrown becomes the JSON error answer through apiRoute.

export interface UserRouteContext<Params> {
  request: Request;
  /** The route's parameters, already awaited. */
  params: Params;
  user: SessionUser;
}

export type TeamRouteContext<Params> = UserRouteContext<Params> & TeamAccess;
export type DerivationRouteContext<Params> = UserRouteContext<Params> & DerivationAccess;
export type RunRouteContext<Params> = DerivationRouteContext<Params> & { run: SimulationRun };
export type FileRouteContext<Params> = DerivationRouteContext<Params> & { file: StoredFile };

type Handler<Context> = (context: Context) => Promise<Response>;

/** A route for any signed-in user. */
export function userRoute<Params = Record<string, never>>(handler: Handler<UserRouteContext<Params>>) {
  return apiRoute<Params>(async (request, { params }) => {
    const user = await requireUser();
    return handler({ request, params: await params, user });
  });
}

/** A route on `/teams/[teamId]/…`: the caller's membership must allow `action`. */
export function teamRoute<Params extends { teamId: string }>(action: Action, handler: Handler<TeamRouteContext<Params>>) {
  return userRoute<Params>(async (context) => {
    const access = await loadTeamFor(context.user, context.params.teamId, action);
    return handler({ ...context, ...access });
  });
}

/** A route on `/derivations/[id]/…`: the derivation, if the caller's role allows `action` on it. */
export function derivationRoute<Params extends { id: string }>(action: Action, handler: Handler<DerivationRouteContext<Params>>) {
  return userRoute<Params>(async (context) => {
    const access = await loadDerivationFor(context.user, context.params.id, action);
    return handler({ ...context, ...access });
  });
}

/** A route on `/derivations/[id]/runs/[runId]/…`: the run, when it belongs to a derivation the caller may `action`. */
export function runRoute<Params extends { id: string; runId: string }>(action: Action, handler: Handler<RunRouteContext<Params>>) {
  return derivationRoute<Params>(action, async (context) => {
    const runId = uuidField.safeParse(context.params.runId);
    const run = runId.success ? await getSimulationRunByIdAndDerivationId({ id: runId.data, derivationId: context.derivation.id }) : null;
    if (!run) throw new AppError("not_found:simulation", "Run not found.");
    return handler({ ...context, run });
  });
}

/**
 * A route on `/files/[fileId]`: the file and its derivation, when the caller
 * may `action` on that derivation. Another team's file looks exactly like a
 * missing one.
 */
export function fileRoute<Params extends { fileId: string }>(action: Action, handler: Handler<FileRouteContext<Params>>) {
  return userRoute<Params>(async (context) => {
    const fileId = uuidField.safeParse(context.params.fileId);
    const file = fileId.success ? await getFileById({ id: fileId.data }) : null;
    if (!file) throw new AppError("not_found:file", "File not found.");
    const access = await loadDerivationFor(context.user, file.derivationId, action);
    return handler({ ...context, ...access, file });
  });
}
