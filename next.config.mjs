// Next.js configuration. Server-only math libraries stay external to the server
// bundle; `odex` resolves to its plain ES module source for Turbopack.
/** @type {import('next').NextConfig} */
const nextConfig = {
  reactStrictMode: true,
  poweredByHeader: false,
  // Type checking is its own gate (`npm run typecheck`), so a build, which the
  // demo and the browser suite each need once, stays quick on small machines.
  typescript: { ignoreBuildErrors: true },
  serverExternalPackages: ["nerdamer"],
  // Security headers and the Content-Security-Policy (with a nonce per page) are
  // set by proxy.ts for every page and route (lib/security/headers.ts); static
  // files, which the proxy skips, still must not be sniffed into another type.
  async headers() {
    return [{ source: "/_next/static/:path*", headers: [{ key: "X-Content-Type-Options", value: "nosniff" }] }];
  },
  turbopack: {
    resolveAlias: {
      odex: "./node_modules/odex/src/odex.js",
    },
  },
};

export default nextConfig;
