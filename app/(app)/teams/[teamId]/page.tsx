import type { Metadata } from "next";
import Link from "next/link";
import { DerivationsBoard } from "@/components/derivations/derivations-board";
import { TrashPanel } from "@/components/derivations/trash-panel";
import { getMembersByTeamId } from "@/db/queries/teams";
import { loadTeamFor, orNotFound } from "@/lib/auth/access";
import { can } from "@/lib/auth/permissions";
import { requirePageUser } from "@/lib/auth/session";
import { roleLabels } from "@/lib/domain";

export const metadata: Metadata = { title: "Team dashboard" };

export default async function TeamDashboardPage({ params }: { params: Promise<{ teamId: string }> }) {
  const { teamId } = await params;
  const user = await requirePageUser(`/teams/${teamId}`);
  const { team, membership } = await orNotFound(() => loadTeamFor(user, teamId, "team:read"));
  const members = await getMembersByTeamId({ teamId });
  return (
    <div className="space-y-6">
      <div className="flex flex-wrap items-end justify-between gap-4">
        <div>
          <p className="text-xs font-medium uppercase tracking-wider text-muted">Team</p>
          <h1 className="text-2xl font-semibold" data-testid="team-name">
            {team.name}
          </h1>
          <p className="text-sm text-muted">
            You are <span data-testid="my-role">{roleLabels[membership.role].toLowerCase()}</span> · {members.length}{" "}
            {members.length === 1 ? "member" : "members"}
          </p>
        </div>
        <div className="flex gap-4">
          {can(membership.role, "team:audit") ? (
            <Link href={`/teams/${team.id}/audit`} className="text-sm text-action hover:underline">
              Audit log
            </Link>
          ) : null}
          <Link href={`/teams/${team.id}/settings`} className="text-sm text-action hover:underline">
            {can(membership.role, "team:manage-members") ? "Members and invitations" : "Members"}
          </Link>
        </div>
      </div>
      <DerivationsBoard
        teamId={team.id}
        role={membership.role}
        currentUserId={user.id}
        owners={members.map((member) => ({ id: member.userId, name: member.name }))}
      />
      {can(membership.role, "derivation:read-trash") ? <TrashPanel teamId={team.id} role={membership.role} currentUserId={user.id} /> : null}
    </div>
  );
}
