import { relations } from "drizzle-orm";
import {
  bigserial,
  bigint,
  boolean,
  customType,
  doublePrecision,
  index,
  integer,
  jsonb,
  pgEnum,
  pgTable,
  primaryKey,
  text,
  timestamp,
  uniqueIndex,
  uuid,
} from "drizzle-orm/pg-core";
import type { EvaluationResult } from "@/lib/evaluation/evaluate";
import type { StoredDocument, StudySettings } from "@/lib/notebook/document";
import type { PeakSummary, StudySpec } from "@/lib/study";
import type { ViewPreferences } from "@/lib/notebook/view-preferences";
import { derivationStatuses, memberRoles, type DerivationStatus, type MemberRole } from "@/lib/domain";

// Every table carries created_at / updated_at. updated_at is set by the query
// functions on each write (see db/queries), not by a trigger, so it stays visible
// in the TypeScript code that changes a row.
const timestamps = {
  createdAt: timestamp("created_at", { withTimezone: true }).notNull().defaultNow(),
  updatedAt: timestamp("updated_at", { withTimezone: true }).notNull().defaultNow(),
};

export { memberRoles, derivationStatuses, type MemberRole, type DerivationStatus };
export const memberRole = pgEnum("member_role", memberRoles);
export const derivationStatus = pgEnum("derivation_status", derivationStatuses);

export const users = pgTable("users", {
  id: uuid("id").primaryKey().defaultRandom(),
  // Stored lower-cased; uniqueness is on the normalised address.
  email: text("email").notNull().unique(),
  name: text("name").notNull(),
  passwordHash: text("password_hash").notNull(),
  ...timestamps,
});
export type User = typeof users.$inferSelect;
export type NewUser = typeof users.$inferInsert;

export const teams = pgTable("teams", {
  id: uuid("id").primaryKey().defaultRandom(),
  name: text("name").notNull(),
  slug: text("slug").notNull().unique(),
  ...timestamps,
});
export type Team = typeof teams.$inferSelect;
export type NewTeam = typeof teams.$inferInsert;

export const memberships = pgTable(
  "memberships",
  {
    id: uuid("id").primaryKey().defaultRandom(),
    teamId: uuid("team_id")
      .notNull()
      .references(() => teams.id, { onDelete: "cascade" }),
    userId: uuid("user_id")
      .notNull()
      .references(() => users.id, { onDelete: "cascade" }),
    role: memberRole("role").notNull(),
    ...timestamps,
  },
  (table) => [uniqueIndex("memberships_team_user_idx").on(table.teamId, table.userId), index("memberships_user_idx").on(table.userId)],
);
export type Membership = typeof memberships.$inferSelect;
export type NewMembership = typeof memberships.$inferInsert;

export const invites = pgTable(
  "invites",
  {
    id: uuid("id").primaryKey().defaultRandom(),
    teamId: uuid("team_id")
      .notNull()
      .references(() => teams.id, { onDelete: "cascade" }),
    email: text("email").notNull(),
    role: memberRole("role").notNull(),
    // Only the SHA-256 of the token is stored; the token itself travels in the e-mail.
    tokenHash: text("token_hash").notNull().unique(),
    invitedById: uuid("invited_by_id").references(() => users.id, { onDelete: "set null" }),
    expiresAt: timestamp("expires_at", { withTimezone: true }).notNull(),
    usedAt: timestamp("used_at", { withTimezone: true }),
    usedById: uuid("used_by_id").references(() => users.id, { onDelete: "set null" }),
    ...timestamps,
  },
  (table) => [index("invites_team_idx").on(table.teamId)],
);
export type Invite = typeof invites.$inferSelect;
export type NewInvite = typeof invites.$inferInsert;

export const passwordResetTokens = pgTable(
  "password_reset_tokens",
  {
    id: uuid("id").primaryKey().defaultRandom(),
    userId: uuid("user_id")
      .notNull()
      .references(() => users.id, { onDelete: "cascade" }),
    tokenHash: text("token_hash").notNull().unique(),
    expiresAt: timestamp("expires_at", { withTimezone: true }).notNull(),
    usedAt: timestamp("used_at", { withTimezone: true }),
    ...timestamps,
  },
  (table) => [index("password_reset_tokens_user_idx").on(table.userId)],
);
export type PasswordResetToken = typeof passwordResetTokens.$inferSelect;

export const derivations = pgTable(
  "derivations",
  {
    id: uuid("id").primaryKey().defaultRandom(),
    teamId: uuid("team_id")
      .notNull()
      .references(() => teams.id, { onDelete: "cascade" }),
    title: text("title").notNull(),
    status: derivationStatus("status").notNull().default("draft"),
    ownerId: uuid("owner_id").references(() => users.id, { onDelete: "set null" }),
    // The notebook document. Rows keep the version they were written at; read
    // them through parseStoredDocument, which migrates older ones.
    content: jsonb("content").$type<StoredDocument>().notNull().default({}),
    updatedById: uuid("updated_by_id").references(() => users.id, { onDelete: "set null" }),
    /** People who changed the content since the latest revision; the next revision names them as its authors. */
    pendingAuthorIds: uuid("pending_author_ids").array().notNull().default([]),
    /** Set while the derivation is approved and locked: the exact revision that was approved. */
    lockedRevisionId: uuid("locked_revision_id"),
    lockedAt: timestamp("locked_at", { withTimezone: true }),
    lockedById: uuid("locked_by_id").references(() => users.id, { onDelete: "set null" }),
    // Set when the derivation is moved to the team's trash. A trashed derivation is
    // invisible everywhere but the trash list; it is removed for good (rows and
    // stored objects) once TRASH_RETENTION_DAYS have passed (lib/derivations/trash.ts).
    deletedAt: timestamp("deleted_at", { withTimezone: true }),
    deletedById: uuid("deleted_by_id").references(() => users.id, { onDelete: "set null" }),
    ...timestamps,
  },
  (table) => [index("derivations_team_idx").on(table.teamId, table.updatedAt), index("derivations_team_trash_idx").on(table.teamId, table.deletedAt)],
);
export type Derivation = typeof derivations.$inferSelect;
export type NewDerivation = typeof derivations.$inferInsert;

export const revisionKinds = ["auto", "checkpoint", "restore", "review", "import"] as const;
export type RevisionKind = (typeof revisionKinds)[number];
export const revisionKind = pgEnum("revision_kind", revisionKinds);

/**
 * A derivation's history: each revision is a full copy of the document with the
 * SHA-256 of its RFC 8785 canonical JSON, numbered from 1 per derivation. Rows
 * are never rewritten; a restore adds a revision.
 */
export const revisions = pgTable(
  "revisions",
  {
    id: uuid("id").primaryKey().defaultRandom(),
    derivationId: uuid("derivation_id")
      .notNull()
      .references(() => derivations.id, { onDelete: "cascade" }),
    number: integer("number").notNull(),
    kind: revisionKind("kind").notNull(),
    /** A checkpoint's name, or what a restore restored. */
    name: text("name"),
    contentHash: text("content_hash").notNull(),
    title: text("title").notNull(),
    content: jsonb("content").$type<Record<string, unknown>>().notNull(),
    /** Derived results at this revision (equations, mass matrix…), filled when they are known. */
    results: jsonb("results").$type<Record<string, unknown>>(),
    authorIds: uuid("author_ids").array().notNull().default([]),
    createdById: uuid("created_by_id").references(() => users.id, { onDelete: "set null" }),
    ...timestamps,
  },
  (table) => [uniqueIndex("revisions_derivation_number_idx").on(table.derivationId, table.number)],
);
export type Revision = typeof revisions.$inferSelect;

export const reviewDecisions = ["pending", "signed_off", "changes_requested"] as const;
export type ReviewDecision = (typeof reviewDecisions)[number];
export const reviewDecision = pgEnum("review_decision", reviewDecisions);

/** One request for review of one revision; closed when changes are requested, a new request is made, or it is approved. */
export const reviewRequests = pgTable(
  "review_requests",
  {
    id: uuid("id").primaryKey().defaultRandom(),
    derivationId: uuid("derivation_id")
      .notNull()
      .references(() => derivations.id, { onDelete: "cascade" }),
    revisionId: uuid("revision_id")
      .notNull()
      .references(() => revisions.id, { onDelete: "cascade" }),
    requestedById: uuid("requested_by_id").references(() => users.id, { onDelete: "set null" }),
    message: text("message").notNull().default(""),
    closedAt: timestamp("closed_at", { withTimezone: true }),
    ...timestamps,
  },
  (table) => [index("review_requests_derivation_idx").on(table.derivationId, table.createdAt)],
);
export type ReviewRequest = typeof reviewRequests.$inferSelect;

/** A reviewer (or lead) asked to review, and what they decided. */
export const reviewAssignments = pgTable(
  "review_assignments",
  {
    id: uuid("id").primaryKey().defaultRandom(),
    requestId: uuid("request_id")
      .notNull()
      .references(() => reviewRequests.id, { onDelete: "cascade" }),
    reviewerId: uuid("reviewer_id")
      .notNull()
      .references(() => users.id, { onDelete: "cascade" }),
    decision: reviewDecision("decision").notNull().default("pending"),
    comment: text("comment").notNull().default(""),
    decidedAt: timestamp("decided_at", { withTimezone: true }),
    ...timestamps,
  },
  (table) => [uniqueIndex("review_assignments_request_reviewer_idx").on(table.requestId, table.reviewerId)],
);
export type ReviewAssignment = typeof reviewAssignments.$inferSelect;

/** Every approval of a derivation, kept after an unlock (with who unlocked it, when and why). */
export const approvals = pgTable(
  "approvals",
  {
    id: uuid("id").primaryKey().defaultRandom(),
    derivationId: uuid("derivation_id")
      .notNull()
      .references(() => derivations.id, { onDelete: "cascade" }),
    revisionId: uuid("revision_id")
      .notNull()
      .references(() => revisions.id, { onDelete: "cascade" }),
    contentHash: text("content_hash").notNull(),
    approvedById: uuid("approved_by_id").references(() => users.id, { onDelete: "set null" }),
    approvedAt: timestamp("approved_at", { withTimezone: true }).notNull().defaultNow(),
    unlockedAt: timestamp("unlocked_at", { withTimezone: true }),
    unlockedById: uuid("unlocked_by_id").references(() => users.id, { onDelete: "set null" }),
    unlockReason: text("unlock_reason"),
    ...timestamps,
  },
  (table) => [index("approvals_derivation_idx").on(table.derivationId, table.approvedAt)],
);
export type Approval = typeof approvals.$inferSelect;

/** In-app notifications (review requests, decisions, approvals); read when `readAt` is set. */
export const notifications = pgTable(
  "notifications",
  {
    id: uuid("id").primaryKey().defaultRandom(),
    userId: uuid("user_id")
      .notNull()
      .references(() => users.id, { onDelete: "cascade" }),
    teamId: uuid("team_id").references(() => teams.id, { onDelete: "cascade" }),
    derivationId: uuid("derivation_id").references(() => derivations.id, { onDelete: "cascade" }),
    actorId: uuid("actor_id").references(() => users.id, { onDelete: "set null" }),
    kind: text("kind").notNull(),
    text: text("text").notNull(),
    readAt: timestamp("read_at", { withTimezone: true }),
    ...timestamps,
  },
  (table) => [index("notifications_user_idx").on(table.userId, table.createdAt)],
);
export type Notification = typeof notifications.$inferSelect;

/**
 * Team API tokens for downstream builds: read-only, shown once, stored as a
 * SHA-256 hash; `prefix` (the first characters) lets people tell them apart.
 */
export const apiTokens = pgTable(
  "api_tokens",
  {
    id: uuid("id").primaryKey().defaultRandom(),
    teamId: uuid("team_id")
      .notNull()
      .references(() => teams.id, { onDelete: "cascade" }),
    name: text("name").notNull(),
    tokenHash: text("token_hash").notNull().unique(),
    prefix: text("prefix").notNull(),
    scope: text("scope").notNull().default("read"),
    createdById: uuid("created_by_id").references(() => users.id, { onDelete: "set null" }),
    expiresAt: timestamp("expires_at", { withTimezone: true }),
    revokedAt: timestamp("revoked_at", { withTimezone: true }),
    revokedById: uuid("revoked_by_id").references(() => users.id, { onDelete: "set null" }),
    lastUsedAt: timestamp("last_used_at", { withTimezone: true }),
    lastUsedAddress: text("last_used_address"),
    ...timestamps,
  },
  (table) => [index("api_tokens_team_idx").on(table.teamId, table.createdAt)],
);
export type ApiToken = typeof apiTokens.$inferSelect;

// ---------------------------------------------------------------------------
// Rate limits (security). The counters of rate-limiter-flexible's PostgreSQL
// store: one row per limit and key ("<limit>:<key>"), the points used in the
// current window and when the window ends (ms since the epoch). The library
// writes the rows with positional INSERTs, so the columns are exactly these,
// in this order, without the usual timestamps; lib/auth/rate-limit.ts defines
// the limits.
export const rateLimits = pgTable(
  "rate_limits",
  {
    key: text("key").primaryKey(),
    points: integer("points").notNull().default(0),
    expire: bigint("expire", { mode: "number" }),
  },
  (table) => [index("rate_limits_expire_idx").on(table.expire)],
);
export type RateLimitRow = typeof rateLimits.$inferSelect;
// ---------------------------------------------------------------------------

export const auditLog = pgTable(
  "audit_log",
  {
    id: uuid("id").primaryKey().defaultRandom(),
    // No foreign keys: the log is append-only (a trigger refuses UPDATE, DELETE and TRUNCATE),
    // so a row must outlive the team or user it names instead of cascading with them.
    teamId: uuid("team_id"),
    actorId: uuid("actor_id"),
    // e.g. "derivation.create", "member.role_change", "auth.sign_in_failed"
    action: text("action").notNull(),
    targetType: text("target_type").notNull(),
    targetId: text("target_id"),
    details: jsonb("details").$type<Record<string, unknown>>().notNull().default({}),
    /** The client address the request came from; null for scripts and the seed. */
    address: text("address"),
    ...timestamps,
  },
  (table) => [index("audit_log_team_time_idx").on(table.teamId, table.createdAt), index("audit_log_actor_time_idx").on(table.actorId, table.createdAt)],
);
export type AuditLogEntry = typeof auditLog.$inferSelect;

export const usersRelations = relations(users, ({ many }) => ({ memberships: many(memberships) }));
export const teamsRelations = relations(teams, ({ many }) => ({
  memberships: many(memberships),
  derivations: many(derivations),
}));
export const membershipsRelations = relations(memberships, ({ one }) => ({
  team: one(teams, { fields: [memberships.teamId], references: [teams.id] }),
  user: one(users, { fields: [memberships.userId], references: [users.id] }),
}));
export const derivationsRelations = relations(derivations, ({ one }) => ({
  team: one(teams, { fields: [derivations.teamId], references: [teams.id] }),
  owner: one(users, { fields: [derivations.ownerId], references: [users.id] }),
}));

// Engine results of a notebook evaluation, shared by every derivation whose
// model normalises to the same text. The key is the SHA-256 of the normalised
// model, the evaluation settings and the engine version, so unchanged content
// (in any derivation) is answered without running the engine again.
export const evaluations = pgTable(
  "evaluations",
  {
    id: uuid("id").primaryKey().defaultRandom(),
    modelHash: text("model_hash").notNull().unique(),
    engineVersion: text("engine_version").notNull(),
    result: jsonb("result").$type<EvaluationResult>().notNull(),
    // Milliseconds per stage of the run that produced the result.
    timings: jsonb("timings").$type<Record<string, number>>().notNull().default({}),
    hitCount: integer("hit_count").notNull().default(0),
    ...timestamps,
  },
  (table) => [index("evaluations_updated_idx").on(table.updatedAt)],
);
export type Evaluation = typeof evaluations.$inferSelect;
export type NewEvaluation = typeof evaluations.$inferInsert;

// Files attached to a derivation: measured rig data (CSV) and images. The bytes
// live in object storage under `objectKey`; a row exists only once the object does.
export const fileKinds = ["measured_csv", "image"] as const;
export type FileKind = (typeof fileKinds)[number];
export const fileKind = pgEnum("file_kind", fileKinds);

/** What the upload check found in a measured-data CSV (columns in header order, time in seconds). */
export interface MeasuredFileSummary {
  timeUnit: string;
  columns: { coordinate: string; unit: string; targetUnit: string }[];
  rowCount: number;
  timeSpan: { start: number; end: number };
}

export const files = pgTable(
  "files",
  {
    id: uuid("id").primaryKey().defaultRandom(),
    derivationId: uuid("derivation_id")
      .notNull()
      .references(() => derivations.id, { onDelete: "cascade" }),
    kind: fileKind("kind").notNull(),
    objectKey: text("object_key").notNull().unique(),
    originalName: text("original_name").notNull(),
    contentType: text("content_type").notNull(),
    sizeBytes: integer("size_bytes").notNull(),
    uploadedById: uuid("uploaded_by_id").references(() => users.id, { onDelete: "set null" }),
    // Measured-data CSVs only.
    summary: jsonb("summary").$type<MeasuredFileSummary>(),
    ...timestamps,
  },
  (table) => [index("files_derivation_idx").on(table.derivationId, table.createdAt)],
);
export type StoredFile = typeof files.$inferSelect;
export type NewStoredFile = typeof files.$inferInsert;

export const simulationRunStatuses = ["completed", "failed"] as const;
export type SimulationRunStatus = (typeof simulationRunStatuses)[number];
export const simulationRunStatus = pgEnum("simulation_run_status", simulationRunStatuses);

/** Columns of a stored trajectory, as plain arrays (JSON in the row or in object storage). */
export interface StoredTrajectory {
  coordinateNames: string[];
  times: number[];
  coordinates: number[][];
  rates: number[][];
  energy: number[] | null;
  /** The model's outputs at every output point, with each one's peak (absent on runs stored before outputs were kept). */
  outputs?: { name: string; unit: string | null; values: number[]; peak: { value: number; time: number } | null }[];
  /** The constraints' multipliers and residuals at every output point; null or absent without constraints. */
  constraints?: {
    names: string[];
    multiplierNames: string[];
    multipliers: number[][];
    residuals: number[][];
    rateResiduals: number[][];
  } | null;
}

/** What a stored run keeps beside its trajectory (lib/runs/service.ts writes it). */
export interface RunSummary {
  /** Each coordinate's unit in the model the run used. */
  coordinateUnits?: Record<string, string>;
  parameterValues?: Record<string, number>;
  stats?: { rhsEvaluations: number; acceptedSteps?: number; wallTimeMs: number; stepTolerance?: { relative: number; absolute: number } };
  /** Present when the energy function was conserved, so its drift is a check. */
  energyCheck?: { relativeDrift: number; maxDeviation?: number; reference?: number; threshold: number; warning: boolean } | null;
  /** t, each coordinate and each rate (`q'`) at the last output time. */
  finalState?: Record<string, number> | null;
  /** How the run held its constraints (the series are in the trajectory); null or absent without constraints. */
  constraints?: {
    kinds: ("position" | "rate")[];
    maxResidual: number[];
    initialProjection: {
      coordinates: { name: string; given: number; projected: number }[];
      rates: { name: string; given: number; projected: number }[];
      residuals: { name: string; kind: "position" | "rate"; given: number }[];
    } | null;
    largestCorrection: { coordinates: number; rates: number };
    method: string;
    explicitTime: boolean;
  } | null;
  /** Units of the multiplier and residual columns, by name. */
  columnUnits?: { multipliers?: Record<string, string>; residuals?: Record<string, string> };
}

// A simulation run on the server, kept with its settings so teammates see the
// same plots. Small trajectories sit in `trajectory`; large ones in object
// storage under `trajectoryKey` (exactly one of the two is set).
export const simulationRuns = pgTable(
  "simulation_runs",
  {
    id: uuid("id").primaryKey().defaultRandom(),
    derivationId: uuid("derivation_id")
      .notNull()
      .references(() => derivations.id, { onDelete: "cascade" }),
    settings: jsonb("settings").$type<Record<string, unknown>>().notNull(),
    status: simulationRunStatus("status").notNull(),
    // failure.reason / failure.message, null when completed.
    failureReason: text("failure_reason"),
    failureMessage: text("failure_message"),
    timeReached: doublePrecision("time_reached").notNull(),
    summary: jsonb("summary").$type<RunSummary>().notNull().default({}),
    trajectory: jsonb("trajectory").$type<StoredTrajectory>(),
    trajectoryKey: text("trajectory_key"),
    pointCount: integer("point_count").notNull(),
    // Relative drift of the energy function; null unless the derivation found it conserved.
    energyDrift: doublePrecision("energy_drift"),
    // SHA-256 of the normalised model the run used (the document may change afterwards).
    modelHash: text("model_hash").notNull(),
    createdById: uuid("created_by_id").references(() => users.id, { onDelete: "set null" }),
    ...timestamps,
  },
  (table) => [index("simulation_runs_derivation_idx").on(table.derivationId, table.createdAt)],
);
export type SimulationRun = typeof simulationRuns.$inferSelect;
export type NewSimulationRun = typeof simulationRuns.$inferInsert;

// A person's own view of a derivation (equation form, equilibrium, code language,
// simulation settings tried): per user and derivation, never part of the document,
// so readers may keep them. The shape is lib/notebook/view-preferences.ts.
export const viewPreferences = pgTable(
  "view_preferences",
  {
    id: uuid("id").primaryKey().defaultRandom(),
    userId: uuid("user_id")
      .notNull()
      .references(() => users.id, { onDelete: "cascade" }),
    derivationId: uuid("derivation_id")
      .notNull()
      .references(() => derivations.id, { onDelete: "cascade" }),
    preferences: jsonb("preferences").$type<ViewPreferences>().notNull(),
    ...timestamps,
  },
  (table) => [uniqueIndex("view_preferences_user_derivation_idx").on(table.userId, table.derivationId)],
);
export type ViewPreferencesRow = typeof viewPreferences.$inferSelect;
export type NewViewPreferencesRow = typeof viewPreferences.$inferInsert;
// Requests that create a derivation (create, import, notebook import) may carry an
// `Idempotency-Key` header. The first request with a key records the derivation it
// created; a repeat with the same key and the same request gets the same answer
// instead of a second derivation. `fingerprint` is the SHA-256 of what was asked,
// so the key cannot be reused for a different request. Keys expire after a day.
export const idempotencyKeys = pgTable(
  "idempotency_keys",
  {
    id: uuid("id").primaryKey().defaultRandom(),
    userId: uuid("user_id")
      .notNull()
      .references(() => users.id, { onDelete: "cascade" }),
    key: text("key").notNull(),
    // e.g. "derivation.create", "derivation.import", "derivation.import_notebook"
    operation: text("operation").notNull(),
    fingerprint: text("fingerprint").notNull(),
    derivationId: uuid("derivation_id")
      .notNull()
      .references(() => derivations.id, { onDelete: "cascade" }),
    ...timestamps,
  },
  (table) => [uniqueIndex("idempotency_keys_user_key_idx").on(table.userId, table.key)],
);
export type IdempotencyKey = typeof idempotencyKeys.$inferSelect;

// ---------------------------------------------------------------------------
// Background jobs (robust slice). Heavy work (server simulations, parameter fits,
// evaluations of large models, rendered reports,
// batches of parameter-study runs) runs in queue workers (pg-boss,
// its own `pgboss` schema) rather than in the web process. This table is the job
// as people see it: who asked, for which derivation, its state, progress and
// answer; the row's id is the pg-boss job id. A new kind: append it here (and a
// migration adding the enum value), then a handler in lib/jobs/handlers.ts.
export const jobKinds = ["simulation", "fit", "study", "evaluation", "report"] as const;
export type JobKind = (typeof jobKinds)[number];
export const jobKind = pgEnum("job_kind", jobKinds);
export const jobStates = ["queued", "running", "completed", "failed", "cancelled"] as const;
export type JobState = (typeof jobStates)[number];
export const jobState = pgEnum("job_state", jobStates);

/** A job's refusal or failure, as the API answers errors (code, message, field errors). */
export interface JobError {
  code: string;
  message: string;
  fieldErrors?: Record<string, string[]>;
  details?: Record<string, unknown>;
}

export const jobs = pgTable(
  "jobs",
  {
    id: uuid("id").primaryKey().defaultRandom(),
    derivationId: uuid("derivation_id")
      .notNull()
      .references(() => derivations.id, { onDelete: "cascade" }),
    kind: jobKind("kind").notNull(),
    state: jobState("state").notNull().default("queued"),
    // Fraction done, 0 … 1, written by the worker as the task reports it.
    progress: doublePrecision("progress").notNull().default(0),
    // What was asked, with the derivation's content at the time, so the job runs what its author saw.
    input: jsonb("input").$type<Record<string, unknown>>().notNull(),
    result: jsonb("result").$type<Record<string, unknown>>(),
    error: jsonb("error").$type<JobError>(),
    createdById: uuid("created_by_id").references(() => users.id, { onDelete: "set null" }),
    // The worker process that last took the job, "<host>:<pid>", to trace a job to its worker.
    worker: text("worker"),
    startedAt: timestamp("started_at", { withTimezone: true }),
    finishedAt: timestamp("finished_at", { withTimezone: true }),
    ...timestamps,
  },
  (table) => [index("jobs_derivation_idx").on(table.derivationId, table.createdAt)],
);
export type Job = typeof jobs.$inferSelect;
export type NewJob = typeof jobs.$inferInsert;
// Shared documents (live co-editing)
//
// A derivation's shared document is the Yjs updates in `derivation_updates`,
// appended one row per stored update and read back in id order. Rows are never
// changed; compaction folds a derivation's rows into one new row and deletes
// exactly the rows it read, in one transaction under the derivation's advisory
// lock (db/queries/collab.ts). `derivations.content` stays as the JSON copy the
// collaboration server keeps current for search, evaluation and export.

/** Raw bytes: Uint8Array in code, bytea in PostgreSQL (node-postgres reads it as a Buffer). */
export const bytea = customType<{ data: Uint8Array; driverData: Buffer }>({
  dataType: () => "bytea",
  toDriver: (value) => Buffer.from(value.buffer, value.byteOffset, value.byteLength),
  fromDriver: (value) => new Uint8Array(value.buffer, value.byteOffset, value.byteLength),
});

export const derivationUpdates = pgTable(
  "derivation_updates",
  {
    id: bigserial("id", { mode: "number" }).primaryKey(),
    derivationId: uuid("derivation_id")
      .notNull()
      .references(() => derivations.id, { onDelete: "cascade" }),
    /** One Yjs update (encodeStateAsUpdate format, or a folded state after compaction). */
    update: bytea("update").notNull(),
    createdAt: timestamp("created_at", { withTimezone: true }).notNull().defaultNow(),
  },
  (table) => [index("derivation_updates_derivation_id_idx").on(table.derivationId, table.id)],
);
export type DerivationUpdate = typeof derivationUpdates.$inferSelect;

// ---------------------------------------------------------------------------
// Comment threads (issue 9). A thread is anchored either to a span of an editor
// field's text (Yjs relative positions, so the span follows concurrent edits) or
// to one term of a generated equation (the engine's stable term key). Comments
// are soft-deleted so a thread keeps its shape; mentions are recorded per comment
// so an edit never notifies the same person twice.

export const commentAnchorKinds = ["text", "term"] as const;
export type CommentAnchorKind = (typeof commentAnchorKinds)[number];
export const commentAnchorKind = pgEnum("comment_anchor_kind", commentAnchorKinds);
export const commentThreadStatuses = ["open", "resolved"] as const;
export type CommentThreadStatus = (typeof commentThreadStatuses)[number];
export const commentThreadStatus = pgEnum("comment_thread_status", commentThreadStatuses);

export const commentThreads = pgTable(
  "comment_threads",
  {
    id: uuid("id").primaryKey().defaultRandom(),
    derivationId: uuid("derivation_id")
      .notNull()
      .references(() => derivations.id, { onDelete: "cascade" }),
    authorId: uuid("author_id").references(() => users.id, { onDelete: "set null" }),
    anchorKind: commentAnchorKind("anchor_kind").notNull(),
    status: commentThreadStatus("status").notNull().default("open"),
    // Text anchors: the cell and field (e.g. "expr", "rows.<rowId>.value"), the encoded
    // Yjs relative positions of the first character and of the last one, and the quoted text.
    cellId: text("cell_id"),
    fieldPath: text("field_path"),
    anchorStart: bytea("anchor_start"),
    anchorEnd: bytea("anchor_end"),
    quote: text("quote"),
    // Term anchors: "<cellId>:<coordinate>:<term hash>", with the term as it read then.
    termKey: text("term_key"),
    termText: text("term_text"),
    termLatex: text("term_latex"),
    // What the thread was written on: the latest revision then, and the SHA-256 of the content.
    revisionId: uuid("revision_id").references(() => revisions.id, { onDelete: "set null" }),
    contentHash: text("content_hash"),
    resolvedAt: timestamp("resolved_at", { withTimezone: true }),
    resolvedById: uuid("resolved_by_id").references(() => users.id, { onDelete: "set null" }),
    ...timestamps,
  },
  (table) => [index("comment_threads_derivation_idx").on(table.derivationId, table.createdAt)],
);
export type CommentThread = typeof commentThreads.$inferSelect;
export type NewCommentThread = typeof commentThreads.$inferInsert;

export const comments = pgTable(
  "comments",
  {
    id: uuid("id").primaryKey().defaultRandom(),
    threadId: uuid("thread_id")
      .notNull()
      .references(() => commentThreads.id, { onDelete: "cascade" }),
    authorId: uuid("author_id").references(() => users.id, { onDelete: "set null" }),
    // Markdown; mentions are written as @[Name](user id).
    body: text("body").notNull(),
    editedAt: timestamp("edited_at", { withTimezone: true }),
    deletedAt: timestamp("deleted_at", { withTimezone: true }),
    ...timestamps,
  },
  (table) => [index("comments_thread_idx").on(table.threadId, table.createdAt)],
);
export type Comment = typeof comments.$inferSelect;

export const commentMentions = pgTable(
  "comment_mentions",
  {
    id: uuid("id").primaryKey().defaultRandom(),
    commentId: uuid("comment_id")
      .notNull()
      .references(() => comments.id, { onDelete: "cascade" }),
    userId: uuid("user_id")
      .notNull()
      .references(() => users.id, { onDelete: "cascade" }),
    // Set when the e-mail went out; null when the person had turned mention e-mails off.
    emailedAt: timestamp("emailed_at", { withTimezone: true }),
    ...timestamps,
  },
  (table) => [uniqueIndex("comment_mentions_comment_user_idx").on(table.commentId, table.userId)],
);
export type CommentMention = typeof commentMentions.$inferSelect;

/** A person's notification choices; no row means the defaults. */
export const notificationSettings = pgTable("notification_settings", {
  userId: uuid("user_id")
    .primaryKey()
    .references(() => users.id, { onDelete: "cascade" }),
  mentionEmails: boolean("mention_emails").notNull().default(true),
  ...timestamps,
});
export type NotificationSettings = typeof notificationSettings.$inferSelect;

// ---------------------------------------------------------------------------
// Parameter studies (issue 14). A study is one run of a study cell: the cell's
// settings as typed, their numbers (`spec`), the content it ran (so a worker on
// any machine runs what was queued, whatever the document becomes) and the
// revision the derivation stood at when it was queued (null when the content
// had changed since its latest revision). Its runs are rows of `study_runs`,
// all written at queueing as `pending` and each finished by the queue worker
// that ran it, with its extremes and its watched series on the study's common
// grid (at most 500 points, float32, watch order). The queue's batches are
// `jobs` rows of kind `study` whose input names the study and the run range.

export const studyStates = ["queued", "running", "completed", "cancelled", "failed"] as const;
export type StudyState = (typeof studyStates)[number];
export const studyState = pgEnum("study_state", studyStates);
export const studyRunStatuses = ["pending", "done", "failed"] as const;
export type StudyRunStatus = (typeof studyRunStatuses)[number];
export const studyRunStatus = pgEnum("study_run_status", studyRunStatuses);

/** What a completed study's figures were: kept so a finished study is read without its runs' series. */
export interface StudyAggregate {
  envelope: unknown;
  worst: unknown;
  sensitivity: unknown;
}

export const studies = pgTable(
  "studies",
  {
    id: uuid("id").primaryKey().defaultRandom(),
    derivationId: uuid("derivation_id")
      .notNull()
      .references(() => derivations.id, { onDelete: "cascade" }),
    cellId: text("cell_id").notNull(),
    revisionId: uuid("revision_id").references(() => revisions.id, { onDelete: "set null" }),
    state: studyState("state").notNull().default("queued"),
    mode: text("mode").$type<StudySpec["mode"]>().notNull(),
    settings: jsonb("settings").$type<StudySettings>().notNull(),
    spec: jsonb("spec").$type<StudySpec>().notNull(),
    /** The derivation's content when the study was queued: the model its runs use, and a run opened from it. */
    content: jsonb("content").$type<Record<string, unknown>>().notNull(),
    modelHash: text("model_hash").notNull(),
    total: integer("total").notNull(),
    done: integer("done").notNull().default(0),
    failed: integer("failed").notNull().default(0),
    /** The whole study failed (the model did not derive, say): not one run. */
    error: jsonb("error").$type<{ code: string; message: string }>(),
    aggregate: jsonb("aggregate").$type<StudyAggregate>(),
    createdById: uuid("created_by_id").references(() => users.id, { onDelete: "set null" }),
    startedAt: timestamp("started_at", { withTimezone: true }),
    finishedAt: timestamp("finished_at", { withTimezone: true }),
    ...timestamps,
  },
  (table) => [index("studies_derivation_cell_idx").on(table.derivationId, table.cellId, table.createdAt)],
);
export type Study = typeof studies.$inferSelect;
export type NewStudy = typeof studies.$inferInsert;

export const studyRuns = pgTable(
  "study_runs",
  {
    studyId: uuid("study_id")
      .notNull()
      .references(() => studies.id, { onDelete: "cascade" }),
    runIndex: integer("run_index").notNull(),
    caseIndex: integer("case_index").notNull(),
    caseName: text("case_name").notNull(),
    parameters: jsonb("parameters").$type<Record<string, number>>().notNull(),
    status: studyRunStatus("status").notNull().default("pending"),
    failureReason: text("failure_reason"),
    failureMessage: text("failure_message"),
    peaks: jsonb("peaks").$type<Record<string, PeakSummary>>().notNull().default({}),
    energyDrift: doublePrecision("energy_drift"),
    constraintResidual: doublePrecision("constraint_residual"),
    /** Watched values at the common grid points: float32 little-endian, one block per watched name in watch order. */
    series: bytea("series"),
    wallTimeMs: doublePrecision("wall_time_ms"),
    ...timestamps,
  },
  (table) => [primaryKey({ columns: [table.studyId, table.runIndex] })],
);
export type StudyRun = typeof studyRuns.$inferSelect;
export type NewStudyRun = typeof studyRuns.$inferInsert;
