import type { Metadata } from "next";
import Link from "next/link";
import { MentionEmailSetting } from "@/components/comments/mention-email-setting";
import { ApiTokensPanel } from "@/components/teams/api-tokens-panel";
import { MembersPanel } from "@/components/teams/members-panel";
import { loadTeamFor, orNotFound } from "@/lib/auth/access";
import { can } from "@/lib/auth/permissions";
import { requirePageUser } from "@/lib/auth/session";

export const metadata: Metadata = { title: "Team members" };

export default async function TeamSettingsPage({ params }: { params: Promise<{ teamId: string }> }) {
  const { teamId } = await params;
  const user = await requirePageUser(`/teams/${teamId}/settings`);
  const { team, membership } = await orNotFound(() => loadTeamFor(user, teamId, "team:read"));
  return (
    <div className="space-y-6">
      <div>
        <Link href={`/teams/${team.id}`} className="text-sm text-action hover:underline">
          ← {team.name}
        </Link>
        <h1 className="text-2xl font-semibold">Members and invitations</h1>
      </div>
      <MembersPanel
        teamId={team.id}
        currentUserId={user.id}
        mayManage={can(membership.role, "team:manage-members")}
        mayInvite={can(membership.role, "team:invite")}
      />
      {can(membership.role, "team:manage-tokens") ? <ApiTokensPanel teamId={team.id} /> : null}
      <MentionEmailSetting />
    </div>
  );
}
