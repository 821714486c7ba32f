import type { Page } from "@playwright/test";

export const artifactsDir = "tests/e2e/artifacts";

export function uniqueEmail(label: string): string {
  return `${label}-${Date.now().toString(36)}-${Math.floor(Math.random() * 1e6)}@e2e.holonomy.test`;
}

export async function keepScreenshot(page: Page, name: string): Promise<void> {
  await page.screenshot({ path: `${artifactsDir}/${name}.png`, fullPage: true });
}
