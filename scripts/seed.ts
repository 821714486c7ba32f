// Seeds the demo team (db/seed/demo.ts). Idempotent: users, the team, memberships
// and derivations are matched by e-mail, slug and title; demo passwords are reset;
// the approved demo derivation is approved once, the demo API token created once.
import { closeDatabase } from "@/db/client";
import { createDerivation, getDerivationById, getDerivationsByTeamId, updateDerivationById } from "@/db/queries/derivations";
import { createTeamWithLead, getTeamBySlug, upsertMembership } from "@/db/queries/teams";
import { createUser, getUserByEmail, updateUserPasswordById } from "@/db/queries/users";
import { demoApiToken, demoApiTokenName, demoDerivations, demoPassword, demoTeam, demoUsers } from "@/db/seed/demo";
import { hashPassword } from "@/lib/auth/password";
import { AppError } from "@/lib/errors";
import { validDocumentOrThrow } from "@/lib/evaluation/document-content";
import { seedDemoEvaluations } from "./lib/seed-evaluations";
import { seedDemoStudy } from "./lib/seed-study";
import { approveDemoDerivation, ensureDemoApiToken, prefillApprovedResults } from "./lib/seed-public-api";

async function main(): Promise<void> {
  const passwordHash = await hashPassword(demoPassword);
  const userIds = new Map<string, string>();
  for (const demoUser of demoUsers) {
    const existing = await getUserByEmail({ email: demoUser.email });
    if (existing) {
      await updateUserPasswordById({ id: existing.id, passwordHash });
      userIds.set(demoUser.email, existing.id);
    } else {
      const created = await createUser({ ...demoUser, passwordHash });
      if (!created) throw new Error(`could not create ${demoUser.email}`);
      userIds.set(demoUser.email, created.id);
    }
  }

  const idOfRole = (role: string) => userIds.get(demoUsers.find((u) => u.role === role)!.email)!;
  const leadId = idOfRole("lead");
  const team = (await getTeamBySlug({ slug: demoTeam.slug })) ?? (await createTeamWithLead({ name: demoTeam.name, leadUserId: leadId }));
  if (team.slug !== demoTeam.slug) throw new Error(`demo team got slug ${team.slug}, expected ${demoTeam.slug}`);
  for (const demoUser of demoUsers) {
    await upsertMembership({ teamId: team.id, userId: userIds.get(demoUser.email)!, role: demoUser.role });
  }

  const existing = new Map((await getDerivationsByTeamId({ teamId: team.id })).map((d) => [d.title, d.id]));
  let added = 0;
  const approvedIds: string[] = [];
  const approvalLines: string[] = [];
  for (const item of demoDerivations) {
    const content = validDocumentOrThrow(item.content, { field: "content", title: item.title });
    let id = existing.get(item.title);
    if (id) {
      // Rows seeded before the notebook held a bare model file; give them the worked notebook.
      const stored = await getDerivationById({ id });
      if (stored && !("cells" in stored.content)) {
        await updateDerivationById({ id, actorId: userIds.get(item.owner)!, changes: { content } });
      }
    } else {
      // An approved one starts as a draft and is approved through the review flow below.
      const created = await createDerivation({
        teamId: team.id,
        title: item.title,
        ownerId: userIds.get(item.owner)!,
        content,
        status: item.status === "approved" ? "draft" : item.status,
      });
      id = created.id;
      added += 1;
    }
    if (item.status === "approved") {
      approvedIds.push(id);
      const outcome = await approveDemoDerivation({ derivationId: id, content, analystId: idOfRole("analyst"), reviewerId: idOfRole("reviewer"), leadId });
      approvalLines.push(`${item.title}: ${outcome}`);
    }
  }
  console.log(`[holonomy] demo team "${team.name}" ready: ${demoUsers.length} members, ${added} derivations added`);
  for (const line of approvalLines) console.log(`[holonomy]   ${line}`);
  console.log(`[holonomy]   ${await ensureDemoApiToken({ teamId: team.id, leadId, secret: demoApiToken, name: demoApiTokenName })}`);
  const evaluated = await seedDemoEvaluations({ teamId: team.id, titles: demoDerivations.map((d) => d.title) });
  for (const line of evaluated) console.log(`[holonomy]   ${line}`);
  for (const id of approvedIds) console.log(`[holonomy]   ${await prefillApprovedResults({ teamId: team.id, derivationId: id })}`);
  console.log(`[holonomy]   ${await seedDemoStudy({ teamId: team.id, userId: idOfRole("analyst") })}`);
}

main()
  .catch((error: unknown) => {
    console.error("[holonomy] seed failed:", error instanceof Error ? error.message : error, AppError.isAppError(error) ? (error.fieldErrors ?? "") : "");
    process.exitCode = 1;
  })
  .finally(() => closeDatabase());
