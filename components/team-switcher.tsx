"use client";

import { useParams, useRouter } from "next/navigation";
import { mayLeave } from "@/components/collab/use-leave-guard";
import { roleLabels, type MemberRole } from "@/lib/domain";
import { useCurrentTeamId } from "./current-team";

export interface TeamOption {
  id: string;
  name: string;
  role: MemberRole;
}

/** Jumps between the user's teams; the current one comes from the URL, or from the page (a derivation's team). */
export function TeamSwitcher({ teams }: { teams: TeamOption[] }) {
  const router = useRouter();
  const params = useParams<{ teamId?: string }>();
  const declared = useCurrentTeamId();
  if (teams.length === 0) return null;
  const current = params.teamId ?? declared ?? "";
  return (
    <label className="flex items-center gap-2 text-sm">
      <span className="sr-only">Team</span>
      <select
        aria-label="Switch team"
        value={teams.some((team) => team.id === current) ? current : ""}
        onChange={(event) => {
          const target = event.target.value ? `/teams/${event.target.value}` : "/teams";
          // Unstored edits on the page being left: wait for them or ask first.
          void mayLeave().then((leave) => leave && router.push(target));
        }}
        className="max-w-64 rounded border border-line bg-surface px-2 py-1 text-sm"
      >
        <option value="">All teams</option>
        {teams.map((team) => (
          <option key={team.id} value={team.id}>
            {team.name} ({roleLabels[team.role]})
          </option>
        ))}
      </select>
    </label>
  );
}
