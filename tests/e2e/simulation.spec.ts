import { expect, test } from "@playwright/test";
import { SignInPage } from "./pages/sign-in-page";
import { SimulationCell } from "./pages/simulation-cell";
import { keepScreenshot } from "./support";

// The demo team's hoist model (db/seed/demo.ts): drum and elastic rope, no dissipation.
const DERIVATION = "Gantry crane: hoist drum and rope stretch";

test("an analyst simulates a derivation in the browser and sees the charts and the energy drift", async ({ page }) => {
  test.setTimeout(120_000);
  const signIn = new SignInPage(page);
  await signIn.goto();
  await signIn.signIn("analyst@demo.holonomy.test", "kestrel-demo-2041");
  await expect(page).toHaveURL(/\/teams\//);
  await page.getByRole("link", { name: DERIVATION }).first().click();
  await expect(page.getByTestId("notebook")).toBeVisible({ timeout: 30_000 });

  const simulation = new SimulationCell(page);
  await simulation.add();
  await simulation.setEndTime("2");
  await simulation.run();

  const chart = simulation.chart("coordinates");
  const canvas = chart.locator("canvas").first();
  await expect(canvas).toBeVisible();
  // Something was drawn: the canvas holds pixels that are not all the same.
  const distinctPixels = await canvas.evaluate((element: HTMLCanvasElement) => {
    const context = element.getContext("2d")!;
    const { data } = context.getImageData(0, 0, element.width, element.height);
    const seen = new Set<number>();
    for (let i = 0; i < data.length && seen.size < 10; i += 4 * 37) seen.add((data[i]! << 24) | (data[i + 1]! << 16) | (data[i + 2]! << 8) | data[i + 3]!);
    return seen.size;
  });
  expect(distinctPixels).toBeGreaterThan(2);
  await expect(simulation.chart("phase").locator("canvas").first()).toBeVisible();

  // The energy function of an undamped hoist with no drive torque stays put to well under the default tolerance.
  const drift = Number(await simulation.energyDrift().textContent());
  expect(drift).toBeGreaterThanOrEqual(0);
  expect(drift).toBeLessThan(1e-5);

  // The charts stay inside the page: nothing scrolls sideways.
  const overflow = await page.evaluate(() => document.documentElement.scrollWidth - document.documentElement.clientWidth);
  expect(overflow).toBeLessThanOrEqual(0);
  await simulation.chart("coordinates").scrollIntoViewIfNeeded();
  await keepScreenshot(page, "simulation-cell");
});
