import type { Metadata } from "next";
import { headers } from "next/headers";
import type { ReactNode } from "react";
import { Providers } from "@/components/providers";
import { plexMono, plexSans } from "./fonts";
import "./globals.css";

export const metadata: Metadata = {
  title: { default: "Holonomy", template: "%s · Holonomy" },
  description: "Derive, check and share equations of motion with your team.",
};

// Applies a stored theme choice before first paint, so dark mode never flashes.
const themeScript = `try{var t=localStorage.getItem("holonomy-theme");if(t==="dark"||t==="light")document.documentElement.dataset.theme=t}catch(e){}`;

// Every page is rendered per request: the Content-Security-Policy's nonce (proxy.ts)
// is fresh for each response, and Next.js can only put it on scripts it renders then.
export default async function RootLayout({ children }: { children: ReactNode }) {
  const nonce = (await headers()).get("x-nonce") ?? undefined;
  return (
    <html lang="en" className={`${plexSans.variable} ${plexMono.variable}`} suppressHydrationWarning>
      <head>
        <script nonce={nonce} dangerouslySetInnerHTML={{ __html: themeScript }} />
      </head>
      <body className="min-h-screen font-sans text-[15px] leading-relaxed">
        <a
          href="#main"
          className="sr-only rounded border border-action bg-surface px-3 py-1.5 text-sm text-action focus:not-sr-only focus:fixed focus:top-2 focus:left-2 focus:z-50"
        >
          Skip to content
        </a>
        <Providers>{children}</Providers>
      </body>
    </html>
  );
}
