import type { Metadata } from "next";
import Link from "next/link";
import { CreateTeamForm } from "@/components/teams/create-team-form";
import { getTeamsByUserId } from "@/db/queries/teams";
import { requirePageUser } from "@/lib/auth/session";
import { roleLabels } from "@/lib/domain";

export const metadata: Metadata = { title: "Teams" };

export default async function TeamsPage() {
  const user = await requirePageUser("/teams");
  const teams = await getTeamsByUserId({ userId: user.id });
  return (
    <div className="grid gap-10 md:grid-cols-[1fr_20rem]">
      <section>
        <h1 className="mb-4 text-2xl font-semibold">Your teams</h1>
        {teams.length === 0 ? (
          <p className="rounded border border-dashed border-line bg-surface px-4 py-6 text-sm text-muted">
            You are not in a team yet. Start one, or ask a lead to invite you.
          </p>
        ) : (
          <ul className="divide-y divide-line rounded border border-line bg-surface" data-testid="team-list">
            {teams.map((team) => (
              <li key={team.id}>
                <Link href={`/teams/${team.id}`} className="flex items-center justify-between px-4 py-3 hover:bg-sunken">
                  <span className="font-medium">{team.name}</span>
                  <span className="text-sm text-muted">
                    {roleLabels[team.role]} · {team.memberCount} {team.memberCount === 1 ? "member" : "members"}
                  </span>
                </Link>
              </li>
            ))}
          </ul>
        )}
      </section>
      <aside>
        <h2 className="mb-3 text-base font-semibold">Start a team</h2>
        <CreateTeamForm />
      </aside>
    </div>
  );
}
