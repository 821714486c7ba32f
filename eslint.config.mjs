import js from "@eslint/js";
import tseslint from "typescript-eslint";

export default tseslint.config(
  { ignores: ["node_modules/**", ".next/**", ".data/**", ".tmp/**", "drizzle/**", "public/**", "dist/**", "next-env.d.ts"] },
  js.configs.recommended,
  ...tseslint.configs.recommended,
  {
    languageOptions: { globals: { process: "readonly", console: "readonly", URL: "readonly" } },
    rules: {
      "@typescript-eslint/no-unused-vars": ["error", { argsIgnorePattern: "^_", varsIgnorePattern: "^_" }],
      // Configuration belongs in lib/env.ts; everything else reads `env`.
      "no-restricted-properties": ["error", { object: "process", property: "env", message: "Read configuration through lib/env.ts." }],
    },
  },
  {
    files: ["lib/env.ts", "*.config.*", "scripts/**", "tests/**", "playwright.config.ts", "drizzle.config.ts", "next.config.mjs"],
    rules: { "no-restricted-properties": "off" },
  },
);
