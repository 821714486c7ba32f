// Seeds the demo team (db/seed/demo.ts). Idempotent: users, the team, memberships
// and derivations are matched by e-mail, slug and title; demo passwords are reset.
import { closeDatabase } from "@/db/client";
import { createDerivation, getDerivationById, getDerivationsByTeamId, updateDerivationById } from "@/db/queries/derivations";
import { createTeamWithLead, getTeamBySlug, upsertMembership } from "@/db/queries/teams";
import { createUser, getUserByEmail, updateUserPasswordById } from "@/db/queries/users";
import { demoDerivations, demoPassword, demoTeam, demoUsers } from "@/db/seed/demo";
import { hashPassword } from "@/lib/auth/password";
import { AppError } from "@/lib/errors";
import { validDocumentOrThrow } from "@/lib/evaluation/document-content";
import { seedDemoEvaluations } from "./lib/seed-evaluations";

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

  const leadId = userIds.get(demoUsers.find((u) => u.role === "lead")!.email)!;
  const team = (await getTeamBySlug({ slug: demoTeam.slug })) ?? (await createTeamWithLead({ name: demoTeam.name, leadUserId: leadId }));
  if (team.slug !== demoTeam.slug) throw new Error(`demo team got slug ${team.slug}, expected ${demoTeam.slug}`);
  for (const demoUser of demoUsers) {
    await upsertMembership({ teamId: team.id, userId: userIds.get(demoUser.email)!, role: demoUser.role });
  }

  const existing = new Map((await getDerivationsByTeamId({ teamId: team.id })).map((d) => [d.title, d.id]));
  let added = 0;
  for (const item of demoDerivations) {
    const content = validDocumentOrThrow(item.content, { field: "content", title: item.title });
    const existingId = existing.get(item.title);
    if (existingId) {
      // Rows seeded before the notebook held a bare model file; give them the worked notebook.
      const stored = await getDerivationById({ id: existingId });
      if (stored && !("cells" in stored.content)) {
        await updateDerivationById({ id: existingId, actorId: userIds.get(item.owner)!, changes: { content } });
      }
      continue;
    }
    await createDerivation({ teamId: team.id, title: item.title, ownerId: userIds.get(item.owner)!, content, status: item.status });
    added += 1;
  }
  console.log(`[holonomy] demo team "${team.name}" ready: ${demoUsers.length} members, ${added} derivations added`);
  const evaluated = await seedDemoEvaluations({ teamId: team.id, titles: demoDerivations.map((d) => d.title) });
  for (const line of evaluated) console.log(`[holonomy]   ${line}`);
}

main()
  .catch((error: unknown) => {
    console.error("[holonomy] seed failed:", error instanceof Error ? error.message : error, AppError.isAppError(error) ? (error.fieldErrors ?? "") : "");
    process.exitCode = 1;
  })
  .finally(() => closeDatabase());
