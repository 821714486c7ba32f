import { expect, test, type Page } from "@playwright/test";
import { demoPassword, demoTeam, demoUsers } from "@/db/seed/demo";
import { DashboardPage } from "./pages/dashboard-page";
import { NotebookPage } from "./pages/notebook-page";
import { SignInPage } from "./pages/sign-in-page";
import { SimulationCell } from "./pages/simulation-cell";
import { keepScreenshot } from "./support";

const analyst = demoUsers.find((user) => user.role === "analyst")!;

async function noSidewaysScroll(page: Page) {
  const overflow = await page.evaluate(() => document.documentElement.scrollWidth - document.documentElement.clientWidth);
  expect(overflow).toBeLessThanOrEqual(0);
}

async function openDemo(page: Page, title: string) {
  const signIn = new SignInPage(page);
  await signIn.goto();
  await signIn.signIn(analyst.email, demoPassword);
  await expect(page).toHaveURL(/\/teams$/);
  await new DashboardPage(page).openTeam(demoTeam.name);
  await page.getByRole("link", { name: title }).click();
  await new NotebookPage(page).expectOpen();
}

test("the crane's rope tension: constraint and output cells, a projected start, peaks and residuals", async ({ page }) => {
  test.setTimeout(240_000);
  await page.setViewportSize({ width: 1280, height: 900 });
  await openDemo(page, "Gantry crane: hoist rope tension during a load swing");

  const constraints = page.locator("[data-kind='constraints']");
  await expect(constraints.getByRole("textbox", { name: "Expression of rope" })).toBeVisible();
  const outputs = page.locator("[data-kind='outputs']");
  await expect(outputs.getByRole("textbox", { name: "Unit, output 1" })).toHaveValue("N");
  await constraints.scrollIntoViewIfNeeded();
  await keepScreenshot(page, "constraint-cells-desktop");

  const simulation = new SimulationCell(page);
  await simulation.run();
  const loads = page.getByTestId("loads-panel");
  await expect(loads).toBeVisible();
  await expect(page.getByTestId("initial-projection")).toContainText("did not meet the constraints");
  const tension = page.getByTestId("peak-row").filter({ hasText: "rope_tension" });
  await expect(tension).toBeVisible();
  const peak = Number(await tension.locator("td").nth(1).textContent());
  // Released at 0.15 rad with the trolley free: m g [1 + 2(1 − cos θ0)(1 + m/M)] ≈ 21 100 N, a little less with the drive's resistance (the demo's own note).
  expect(peak).toBeGreaterThan(20_500);
  expect(peak).toBeLessThan(21_200);
  await expect(page.getByTestId("load-caution")).toContainText("qualified engineer");
  await expect(page.getByTestId("chart-constraint-residuals").locator("canvas").first()).toBeVisible();
  await noSidewaysScroll(page);
  await loads.scrollIntoViewIfNeeded();
  await keepScreenshot(page, "loads-panel-desktop");

  await page.setViewportSize({ width: 390, height: 844 });
  await noSidewaysScroll(page);
  await loads.scrollIntoViewIfNeeded();
  await keepScreenshot(page, "loads-panel-390");
  await constraints.scrollIntoViewIfNeeded();
  await keepScreenshot(page, "constraint-cells-390");
});

test("the seat rig's frequency response: Bode plot, poles and damping, state-space export", async ({ page }) => {
  test.setTimeout(180_000);
  await page.setViewportSize({ width: 1280, height: 900 });
  await openDemo(page, "Seat-suspension rig: single mass on spring and damper");
  const response = page.getByTestId("frequency-response");
  await expect(response).toBeVisible({ timeout: 60_000 });
  await expect(page.getByTestId("bode-magnitude").locator("canvas").first()).toBeVisible();
  await expect(page.getByTestId("bode-phase").locator("canvas").first()).toBeVisible();
  const firstPole = page.getByTestId("pole-row").first();
  // ωn = √(k/m) = √(42000/95) ≈ 21.03 rad/s (the demo's parameters; single-mass oscillator, any vibration text).
  expect(Number(await firstPole.locator("td").nth(1).textContent())).toBeCloseTo(Math.sqrt(42000 / 95), 1);
  const download = page.waitForEvent("download");
  await response.getByRole("button", { name: "CSV" }).click();
  expect((await download).suggestedFilename()).toMatch(/state-space\.csv$/);
  await response.scrollIntoViewIfNeeded();
  await noSidewaysScroll(page);
  await keepScreenshot(page, "frequency-response-desktop");
  await page.setViewportSize({ width: 390, height: 844 });
  await response.scrollIntoViewIfNeeded();
  await noSidewaysScroll(page);
  await keepScreenshot(page, "frequency-response-390");
});
