import "server-only";
import nodemailer, { type Transporter } from "nodemailer";
import { env } from "@/lib/env";
import { AppError } from "@/lib/errors";

export interface OutgoingMail {
  to: string;
  subject: string;
  text: string;
  html: string;
}

let transporter: Transporter | undefined;

function transport(): Transporter {
  transporter ??= nodemailer.createTransport({
    host: env.SMTP_HOST,
    port: env.SMTP_PORT,
    secure: false,
    // The local fake offers no TLS; a real relay would be configured by env.
    ignoreTLS: env.SMTP_HOST === "127.0.0.1" || env.SMTP_HOST === "localhost",
    connectionTimeout: 5000,
  });
  return transporter;
}

export async function sendMail(mail: OutgoingMail): Promise<void> {
  try {
    await transport().sendMail({ from: env.MAIL_FROM, ...mail });
  } catch (error) {
    console.error("[holonomy] mail delivery failed:", (error as Error).message);
    throw new AppError("unavailable:mail", "The e-mail could not be sent. Try again in a moment.", { cause: error });
  }
}

function escapeHtml(value: string): string {
  return value.replace(/[&<>"']/g, (c) => ({ "&": "&amp;", "<": "&lt;", ">": "&gt;", '"': "&quot;", "'": "&#39;" })[c] ?? c);
}

/** A plain, readable e-mail with one call-to-action link. */
export function composeLinkMail({
  to,
  subject,
  intro,
  linkLabel,
  link,
  footnote,
}: {
  to: string;
  subject: string;
  intro: string;
  linkLabel: string;
  link: string;
  footnote: string;
}): OutgoingMail {
  return {
    to,
    subject,
    text: `${intro}\n\n${linkLabel}: ${link}\n\n${footnote}\n\n— Holonomy`,
    html: `<div style="font-family:sans-serif;line-height:1.5;color:#23262b">
<p>${escapeHtml(intro)}</p>
<p><a href="${escapeHtml(link)}" style="color:#0f5f63;font-weight:600">${escapeHtml(linkLabel)}</a></p>
<p style="font-size:13px;color:#5b6068">${escapeHtml(footnote)}</p>
<p style="font-size:13px;color:#5b6068">— Holonomy</p></div>`,
  };
}
