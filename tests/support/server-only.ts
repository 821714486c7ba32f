// Stand-in for the "server-only" marker package inside vitest (see vitest.config.ts).
export {};
