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
  // Baseline headers for every response. No script-src policy: Next's inline
  // bootstrap scripts, KaTeX and the engine's Web Workers would need nonces or
  // hashes first. frame-ancestors covers what X-Frame-Options does for newer browsers.
  async headers() {
    return [
      {
        source: "/:path*",
        headers: [
          { key: "X-Frame-Options", value: "DENY" },
          { key: "Content-Security-Policy", value: "frame-ancestors 'none'" },
          { key: "X-Content-Type-Options", value: "nosniff" },
          { key: "Referrer-Policy", value: "strict-origin-when-cross-origin" },
        ],
      },
    ];
  },
  turbopack: {
    resolveAlias: {
      odex: "./node_modules/odex/src/odex.js",
    },
  },
};

export default nextConfig;
