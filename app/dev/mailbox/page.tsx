import type { Metadata } from "next";
import Link from "next/link";
import { notFound } from "next/navigation";
import type { ReactNode } from "react";
import { Brand } from "@/components/brand";
import { SiteFooter } from "@/components/site-footer";
import { Notice } from "@/components/ui/notice";
import { devMailboxAvailable } from "@/lib/dev-mailbox";
import { AppError } from "@/lib/errors";
import { getCapturedMessage, listCapturedMessages, type CapturedMessage } from "@/lib/mailbox";

export const metadata: Metadata = { title: "Development mailbox" };
export const dynamic = "force-dynamic";

const timeFormat = new Intl.DateTimeFormat("en-GB", { dateStyle: "medium", timeStyle: "medium" });

// Turns bare URLs in a plain-text body into links, without interpreting any HTML.
function linkify(text: string): ReactNode[] {
  return text.split(/(https?:\/\/[^\s<>"']+)/g).map((part, index) =>
    /^https?:\/\//.test(part) ? (
      <a key={index} href={part} className="break-all text-action underline">
        {part}
      </a>
    ) : (
      part
    ),
  );
}

export default async function MailboxPage({ searchParams }: { searchParams: Promise<{ id?: string }> }) {
  if (!(await devMailboxAvailable())) notFound();
  const { id } = await searchParams;
  let messages: CapturedMessage[] = [];
  let selected: CapturedMessage | null = null;
  let problem: string | null = null;
  try {
    messages = await listCapturedMessages();
    if (id) selected = await getCapturedMessage(id);
  } catch (error) {
    problem = error instanceof AppError ? error.message : "The mailbox could not be read.";
  }
  return (
    <div className="flex min-h-screen flex-col">
      <header className="border-b border-line bg-surface">
        <div className="mx-auto flex max-w-6xl items-center gap-4 px-6 py-2.5">
          <Brand />
          <span className="rounded-sm border border-seal/50 bg-seal-soft px-1.5 text-xs font-medium text-seal">development only</span>
          <Link href="/teams" className="ml-auto text-sm text-action hover:underline">
            Back to the app
          </Link>
        </div>
      </header>
      <main id="main" tabIndex={-1} className="mx-auto w-full max-w-6xl flex-1 px-6 py-8">
        <h1 className="mb-1 text-2xl font-semibold">Mailbox</h1>
        <p className="mb-6 text-sm text-muted">Every e-mail the app sends here is caught by a local fake mail server. Nothing leaves this machine.</p>
        {problem ? <Notice tone="error">{problem}</Notice> : null}
        <div className="grid gap-6 md:grid-cols-[22rem_1fr]">
          <ul className="divide-y divide-line self-start rounded border border-line bg-surface text-sm" data-testid="mailbox-list">
            {messages.length === 0 ? <li className="px-3 py-4 text-muted">No messages yet.</li> : null}
            {messages.map((message) => (
              <li key={message.id}>
                <Link
                  href={`/dev/mailbox?id=${encodeURIComponent(message.id)}`}
                  className={`block px-3 py-2 hover:bg-sunken ${selected?.id === message.id ? "bg-action-soft" : ""}`}
                >
                  <div className="font-medium">{message.subject || "(no subject)"}</div>
                  <div className="text-xs text-muted">
                    to {message.to.map((to) => to.address).join(", ")} · {timeFormat.format(new Date(message.time))}
                  </div>
                </Link>
              </li>
            ))}
          </ul>
          {selected ? (
            <article className="rounded border border-line bg-surface p-5" data-testid="mailbox-message">
              <h2 className="text-lg font-semibold">{selected.subject}</h2>
              <p className="mb-4 text-xs text-muted">
                From {selected.from.map((from) => from.address).join(", ")} to {selected.to.map((to) => to.address).join(", ")} ·{" "}
                {timeFormat.format(new Date(selected.time))}
              </p>
              <div className="whitespace-pre-wrap text-sm leading-relaxed">{linkify(selected.text)}</div>
            </article>
          ) : (
            <p className="text-sm text-muted">Pick a message to read it.</p>
          )}
        </div>
      </main>
      <SiteFooter />
    </div>
  );
}
