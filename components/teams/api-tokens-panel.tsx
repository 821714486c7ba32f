"use client";

import { useMutation, useQuery, useQueryClient } from "@tanstack/react-query";
import { useState } from "react";
import { Button } from "@/components/ui/button";
import { Field, SelectField } from "@/components/ui/field";
import { Notice } from "@/components/ui/notice";
import { apiFetch } from "@/lib/api/fetcher";
import type { ApiTokenView } from "@/lib/auth/api-tokens";
import { AppError } from "@/lib/errors";

const dateFormat = new Intl.DateTimeFormat("en-GB", { dateStyle: "medium" });
const dateTimeFormat = new Intl.DateTimeFormat("en-GB", { dateStyle: "medium", timeStyle: "short" });

const LIFETIMES = [
  { label: "30 days", days: 30 },
  { label: "90 days", days: 90 },
  { label: "1 year", days: 365 },
  { label: "No expiry", days: null },
] as const;

const stateLabels: Record<ApiTokenView["state"], string> = { active: "Active", expired: "Expired", revoked: "Revoked" };

/**
 * A lead's list of the team's read-only API tokens: create one (its value is
 * shown once, here), see when each was last used, revoke one.
 */
export function ApiTokensPanel({ teamId }: { teamId: string }) {
  const queryClient = useQueryClient();
  const tokensKey = ["teams", teamId, "tokens"];
  const tokens = useQuery({
    queryKey: tokensKey,
    queryFn: ({ signal }) => apiFetch<{ tokens: ApiTokenView[] }>(`/api/teams/${teamId}/tokens`, { signal }),
  });
  const [name, setName] = useState("");
  const [lifetime, setLifetime] = useState<string>("90");
  const [created, setCreated] = useState<{ name: string; secret: string } | null>(null);
  const [copied, setCopied] = useState(false);

  const create = useMutation({
    mutationFn: () =>
      apiFetch<{ token: ApiTokenView; secret: string }>(`/api/teams/${teamId}/tokens`, {
        method: "POST",
        body: { name, expiresInDays: lifetime === "none" ? null : Number(lifetime) },
      }),
    onMutate: () => {
      setCreated(null);
      setCopied(false);
    },
    onSuccess: (data) => {
      setCreated({ name: data.token.name, secret: data.secret });
      setName("");
    },
    onSettled: () => queryClient.invalidateQueries({ queryKey: tokensKey }),
  });
  const revoke = useMutation({
    mutationFn: (tokenId: string) => apiFetch(`/api/teams/${teamId}/tokens/${tokenId}`, { method: "DELETE" }),
    onSettled: () => queryClient.invalidateQueries({ queryKey: tokensKey }),
  });
  const nameError = create.error instanceof AppError ? create.error.fieldErrors?.name?.[0] : undefined;

  return (
    <section aria-labelledby="api-tokens-heading" className="space-y-3">
      <div>
        <h2 id="api-tokens-heading" className="text-lg font-semibold">
          API tokens
        </h2>
        <p className="text-sm text-muted">
          Read-only tokens that let a build or a script fetch this team&apos;s approved derivations with{" "}
          <code className="font-mono text-xs">Authorization: Bearer &lt;token&gt;</code>. A token&apos;s value is shown once, when it is created.
        </p>
      </div>
      <form
        className="flex flex-wrap items-end gap-3 rounded border border-line bg-surface p-3"
        aria-label="Create an API token"
        noValidate
        onSubmit={(event) => {
          event.preventDefault();
          create.mutate();
        }}
      >
        <Field
          label="Name"
          className="min-w-48 flex-1"
          value={name}
          onChange={(event) => setName(event.target.value)}
          error={nameError}
          placeholder="e.g. gimbal firmware CI"
        />
        <SelectField label="Expires after" value={lifetime} onChange={(event) => setLifetime(event.target.value)}>
          {LIFETIMES.map((option) => (
            <option key={option.label} value={option.days === null ? "none" : String(option.days)}>
              {option.label}
            </option>
          ))}
        </SelectField>
        <Button type="submit" variant="primary" disabled={create.isPending}>
          {create.isPending ? "Creating…" : "Create token"}
        </Button>
      </form>
      {create.error && !nameError ? <Notice tone="error">{create.error.message}</Notice> : null}
      {revoke.error ? <Notice tone="error">{revoke.error.message}</Notice> : null}
      {created ? (
        <Notice tone="info">
          <div className="space-y-2" data-testid="new-token">
            <p>
              Token <strong>{created.name}</strong> created. Copy it now: it will not be shown again.
            </p>
            <div className="flex flex-wrap items-center gap-2">
              <code
                className="min-w-0 flex-1 overflow-x-auto whitespace-nowrap rounded border border-line bg-paper px-2 py-1 font-mono text-xs"
                data-testid="new-token-value"
              >
                {created.secret}
              </code>
              <Button
                size="sm"
                onClick={() => {
                  void navigator.clipboard?.writeText(created.secret).then(() => setCopied(true));
                }}
              >
                {copied ? "Copied" : "Copy"}
              </Button>
            </div>
          </div>
        </Notice>
      ) : null}
      {/* relative: keeps the screen-reader-only header text inside this scroll box, so the page does not widen on a phone. */}
      <div className="relative overflow-x-auto rounded border border-line bg-surface">
        <table className="w-full text-sm" data-testid="api-tokens-table">
          <thead className="border-b border-line bg-sunken/60 text-left">
            <tr>
              <th scope="col" className="px-3 py-2 font-medium">
                Name
              </th>
              <th scope="col" className="px-3 py-2 font-medium">
                Token
              </th>
              <th scope="col" className="px-3 py-2 font-medium">
                State
              </th>
              <th scope="col" className="px-3 py-2 font-medium">
                Expires
              </th>
              <th scope="col" className="px-3 py-2 font-medium">
                Last used
              </th>
              <th scope="col" className="px-3 py-2">
                <span className="sr-only">Actions</span>
              </th>
            </tr>
          </thead>
          <tbody>
            {(tokens.data?.tokens ?? []).length === 0 ? (
              <tr>
                <td colSpan={6} className="px-3 py-4 text-center text-muted">
                  {tokens.isPending ? "Loading…" : "No tokens yet."}
                </td>
              </tr>
            ) : (
              tokens.data?.tokens.map((token) => (
                <tr key={token.id} className="border-b border-line last:border-0">
                  <td className="px-3 py-2 font-medium">{token.name}</td>
                  <td className="whitespace-nowrap px-3 py-2 font-mono text-xs">{token.prefix}…</td>
                  <td className={token.state === "active" ? "px-3 py-2" : "px-3 py-2 text-muted"}>{stateLabels[token.state]}</td>
                  <td className="whitespace-nowrap px-3 py-2 text-muted">{token.expiresAt ? dateFormat.format(new Date(token.expiresAt)) : "Never"}</td>
                  <td className="whitespace-nowrap px-3 py-2 text-muted">
                    {token.lastUsedAt
                      ? `${dateTimeFormat.format(new Date(token.lastUsedAt))}${token.lastUsedAddress ? ` from ${token.lastUsedAddress}` : ""}`
                      : "Never"}
                  </td>
                  <td className="px-3 py-2 text-right">
                    {token.state === "active" ? (
                      <Button
                        size="sm"
                        variant="ghost"
                        className="hover:text-danger"
                        aria-label={`Revoke ${token.name}`}
                        disabled={revoke.isPending}
                        onClick={() => {
                          if (window.confirm(`Revoke the token "${token.name}"? Builds using it will get 401 at once.`)) revoke.mutate(token.id);
                        }}
                      >
                        Revoke
                      </Button>
                    ) : null}
                  </td>
                </tr>
              ))
            )}
          </tbody>
        </table>
      </div>
    </section>
  );
}
