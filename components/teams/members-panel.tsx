"use client";

import { zodResolver } from "@hookform/resolvers/zod";
import { useMutation, useQuery, useQueryClient } from "@tanstack/react-query";
import { useRouter } from "next/navigation";
import { useState } from "react";
import { useForm } from "react-hook-form";
import { Button } from "@/components/ui/button";
import { Field, SelectField, inputClass } from "@/components/ui/field";
import { Notice } from "@/components/ui/notice";
import { apiFetch } from "@/lib/api/fetcher";
import { memberRoles, roleDescriptions, roleLabels, type MemberRole } from "@/lib/domain";
import { AppError } from "@/lib/errors";
import type { InviteJson, MemberJson } from "@/lib/teams/views";
import { inviteMemberSchema, type InviteMemberInput } from "@/lib/validation/teams";

type MemberRow = MemberJson;
type InviteRow = InviteJson;

const dateFormat = new Intl.DateTimeFormat("en-GB", { dateStyle: "medium" });

export function MembersPanel({
  teamId,
  currentUserId,
  mayManage,
  mayInvite,
}: {
  teamId: string;
  currentUserId: string;
  mayManage: boolean;
  mayInvite: boolean;
}) {
  const queryClient = useQueryClient();
  const router = useRouter();
  const membersKey = ["teams", teamId, "members"];
  const invitesKey = ["teams", teamId, "invites"];
  const members = useQuery({
    queryKey: membersKey,
    queryFn: ({ signal }) => apiFetch<{ members: MemberRow[] }>(`/api/teams/${teamId}/members`, { signal }),
  });
  const invites = useQuery({
    queryKey: invitesKey,
    queryFn: ({ signal }) => apiFetch<{ invites: InviteRow[] }>(`/api/teams/${teamId}/invites`, { signal }),
    enabled: mayInvite,
  });
  const [actionError, setActionError] = useState<string | null>(null);

  const changeRole = useMutation({
    mutationFn: ({ userId, role }: { userId: string; role: MemberRole }) =>
      apiFetch(`/api/teams/${teamId}/members/${userId}`, { method: "PATCH", body: { role } }),
    onMutate: () => setActionError(null),
    onError: (error) => setActionError(error.message),
    onSettled: () => {
      router.refresh();
      return queryClient.invalidateQueries({ queryKey: membersKey });
    },
  });
  const removeMember = useMutation({
    mutationFn: (userId: string) => apiFetch(`/api/teams/${teamId}/members/${userId}`, { method: "DELETE" }),
    onMutate: () => setActionError(null),
    onError: (error) => setActionError(error.message),
    onSuccess: (_data, userId) => {
      if (userId === currentUserId) router.push("/teams");
      router.refresh();
    },
    onSettled: () => queryClient.invalidateQueries({ queryKey: membersKey }),
  });

  return (
    <div className="grid min-w-0 gap-8 lg:grid-cols-[minmax(0,1fr)_20rem]">
      <section aria-labelledby="members-heading" className="min-w-0 space-y-3">
        <h2 id="members-heading" className="text-lg font-semibold">
          Members
        </h2>
        {actionError ? <Notice tone="error">{actionError}</Notice> : null}
        {members.error ? <Notice tone="error">{members.error.message}</Notice> : null}
        {/* relative: keeps the screen-reader-only header text inside this scroll box, so the page does not widen on a phone. */}
        <div className="relative overflow-x-auto rounded border border-line bg-surface">
          <table className="w-full text-sm" data-testid="members-table">
            <thead className="border-b border-line bg-sunken/60 text-left">
              <tr>
                <th scope="col" className="px-3 py-2 font-medium">
                  Name
                </th>
                <th scope="col" className="px-3 py-2 font-medium">
                  E-mail
                </th>
                <th scope="col" className="px-3 py-2 font-medium">
                  Role
                </th>
                <th scope="col" className="px-3 py-2 font-medium">
                  Joined
                </th>
                {mayManage ? (
                  <th scope="col" className="px-3 py-2">
                    <span className="sr-only">Actions</span>
                  </th>
                ) : null}
              </tr>
            </thead>
            <tbody>
              {(members.data?.members ?? []).map((member) => (
                <tr key={member.userId} className="border-b border-line last:border-0">
                  <td className="px-3 py-2 font-medium">
                    {member.name}
                    {member.userId === currentUserId ? <span className="ml-1 text-xs text-muted">(you)</span> : null}
                  </td>
                  <td className="px-3 py-2 text-muted">{member.email}</td>
                  <td className="px-3 py-2">
                    {mayManage ? (
                      <select
                        aria-label={`Role of ${member.name}`}
                        value={member.role}
                        disabled={changeRole.isPending}
                        onChange={(event) => changeRole.mutate({ userId: member.userId, role: event.target.value as MemberRole })}
                        className={`${inputClass} w-auto py-1`}
                      >
                        {memberRoles.map((role) => (
                          <option key={role} value={role}>
                            {roleLabels[role]}
                          </option>
                        ))}
                      </select>
                    ) : (
                      roleLabels[member.role]
                    )}
                  </td>
                  <td className="px-3 py-2 text-muted">{dateFormat.format(new Date(member.joinedAt))}</td>
                  {mayManage ? (
                    <td className="px-3 py-2 text-right">
                      <Button
                        size="sm"
                        variant="ghost"
                        className="hover:text-danger"
                        aria-label={`Remove ${member.name}`}
                        disabled={removeMember.isPending}
                        onClick={() => {
                          if (window.confirm(`Remove ${member.name} from the team?`)) removeMember.mutate(member.userId);
                        }}
                      >
                        Remove
                      </Button>
                    </td>
                  ) : null}
                </tr>
              ))}
            </tbody>
          </table>
        </div>
        <dl className="grid gap-x-4 gap-y-1 text-xs text-muted sm:grid-cols-[6rem_1fr]">
          {memberRoles.map((role) => (
            <div key={role} className="contents">
              <dt className="font-medium text-ink">{roleLabels[role]}</dt>
              <dd>{roleDescriptions[role]}</dd>
            </div>
          ))}
        </dl>
      </section>

      {mayInvite ? (
        <aside className="min-w-0 space-y-4">
          <InviteForm teamId={teamId} onInvited={() => queryClient.invalidateQueries({ queryKey: invitesKey })} />
          <OpenInvites
            teamId={teamId}
            invites={invites.data?.invites ?? []}
            error={invites.error?.message ?? null}
            onChanged={() => queryClient.invalidateQueries({ queryKey: invitesKey })}
          />
        </aside>
      ) : null}
    </div>
  );
}

/** Open invitations, each with Resend (a new link, a fresh expiry) and Withdraw. */
function OpenInvites({ teamId, invites, error, onChanged }: { teamId: string; invites: InviteRow[]; error: string | null; onChanged: () => void }) {
  const [notice, setNotice] = useState<{ tone: "info" | "error"; text: string } | null>(null);
  const resend = useMutation({
    mutationFn: (invite: InviteRow) => apiFetch(`/api/teams/${teamId}/invites/${invite.id}/resend`, { method: "POST" }),
    onMutate: () => setNotice(null),
    onSuccess: (_data, invite) => setNotice({ tone: "info", text: `Sent again to ${invite.email} with a new link; the earlier link no longer works.` }),
    onError: (failure) => setNotice({ tone: "error", text: failure.message }),
    onSettled: onChanged,
  });
  const revoke = useMutation({
    mutationFn: (invite: InviteRow) => apiFetch(`/api/teams/${teamId}/invites/${invite.id}`, { method: "DELETE" }),
    onMutate: () => setNotice(null),
    onSuccess: (_data, invite) => setNotice({ tone: "info", text: `Invitation to ${invite.email} withdrawn; its link no longer works.` }),
    onError: (failure) => setNotice({ tone: "error", text: failure.message }),
    onSettled: onChanged,
  });
  const busy = resend.isPending || revoke.isPending;
  return (
    <section aria-labelledby="open-invites-heading" className="space-y-2">
      <h2 id="open-invites-heading" className="text-base font-semibold">
        Open invitations
      </h2>
      {notice ? <Notice tone={notice.tone}>{notice.text}</Notice> : null}
      {error ? <Notice tone="error">{error}</Notice> : null}
      {invites.length === 0 ? (
        <p className="text-sm text-muted">None. Accepted invitations move to the members list.</p>
      ) : (
        <ul className="divide-y divide-line rounded border border-line bg-surface text-sm" data-testid="open-invites">
          {invites.map((invite) => (
            <li key={invite.id} className="space-y-1.5 px-3 py-2" data-testid="open-invite">
              <div className="break-all font-medium">{invite.email}</div>
              <div className="text-xs text-muted">
                {roleLabels[invite.role]} · sent {dateFormat.format(new Date(invite.sentAt))} · expires {dateFormat.format(new Date(invite.expiresAt))}
              </div>
              <div className="flex gap-2">
                <Button size="sm" disabled={busy} aria-label={`Resend the invitation to ${invite.email}`} onClick={() => resend.mutate(invite)}>
                  Resend
                </Button>
                <Button
                  size="sm"
                  variant="ghost"
                  className="hover:text-danger"
                  disabled={busy}
                  aria-label={`Withdraw the invitation to ${invite.email}`}
                  onClick={() => {
                    if (window.confirm(`Withdraw the invitation to ${invite.email}? Its link stops working.`)) revoke.mutate(invite);
                  }}
                >
                  Withdraw
                </Button>
              </div>
            </li>
          ))}
        </ul>
      )}
    </section>
  );
}

function InviteForm({ teamId, onInvited }: { teamId: string; onInvited: () => void }) {
  const [sentTo, setSentTo] = useState<{ email: string; replaced: boolean } | null>(null);
  const {
    register,
    handleSubmit,
    reset,
    setError,
    formState: { errors },
  } = useForm<InviteMemberInput>({ resolver: zodResolver(inviteMemberSchema), defaultValues: { email: "", role: "analyst" } });
  const invite = useMutation({
    mutationFn: (values: InviteMemberInput) => apiFetch<{ replaced: number }>(`/api/teams/${teamId}/invites`, { method: "POST", body: values }),
    onSuccess: (data, values) => {
      setSentTo({ email: values.email, replaced: data.replaced > 0 });
      reset({ email: "", role: values.role });
      onInvited();
    },
    onError: (error) => {
      const emailError = error instanceof AppError ? error.fieldErrors?.email?.[0] : undefined;
      if (emailError) setError("email", { message: emailError });
    },
  });
  return (
    <form
      onSubmit={handleSubmit((values) => {
        setSentTo(null);
        invite.mutate(values);
      })}
      noValidate
      className="space-y-3 rounded border border-line bg-surface p-4"
      aria-label="Invite by e-mail"
    >
      <h2 className="text-base font-semibold">Invite by e-mail</h2>
      {sentTo ? (
        <Notice tone="info">
          Invitation sent to {sentTo.email}.{sentTo.replaced ? " It replaces the earlier invitation, whose link no longer works." : ""}
        </Notice>
      ) : null}
      {invite.error && !(invite.error instanceof AppError && invite.error.fieldErrors?.email) ? <Notice tone="error">{invite.error.message}</Notice> : null}
      <Field label="E-mail" type="email" error={errors.email?.message} {...register("email")} />
      <SelectField label="Role" error={errors.role?.message} {...register("role")}>
        {memberRoles.map((role) => (
          <option key={role} value={role}>
            {roleLabels[role]}
          </option>
        ))}
      </SelectField>
      <Button type="submit" variant="primary" disabled={invite.isPending}>
        {invite.isPending ? "Sending…" : "Send invitation"}
      </Button>
    </form>
  );
}
