import { expect, test, type Page } from "@playwright/test";
import { demoPassword, demoTeam, demoUsers } from "@/db/seed/demo";
import { DashboardPage } from "./pages/dashboard-page";
import { NotebookPage } from "./pages/notebook-page";
import { SignInPage } from "./pages/sign-in-page";
import { SimulationCell } from "./pages/simulation-cell";
import { artifactsDir } from "./support";

const analyst = demoUsers.find((user) => user.role === "analyst")!;

/** A rig record of the trolley standing still: x stays at 0 m for 4 s. */
function trolleyAtRestCsv(): string {
  const lines = ["# Trolley T-2 parked, brake released", "t [s], x [m]"];
  for (let k = 0; k <= 40; k++) lines.push(`${(k * 0.1).toFixed(1)}, 0.0`);
  return `${lines.join("\n")}\n`;
}

async function noSidewaysScroll(page: Page) {
  const overflow = await page.evaluate(() => document.documentElement.scrollWidth - document.documentElement.clientWidth);
  expect(overflow).toBeLessThanOrEqual(0);
}

test("the simulation cell of a crane trolley: charts per unit, the trolley on its girder, a fit that explains itself", async ({ page }) => {
  test.setTimeout(180_000);
  await page.setViewportSize({ width: 1280, height: 900 });
  const signIn = new SignInPage(page);
  await signIn.goto();
  await signIn.signIn(analyst.email, demoPassword);
  await expect(page).toHaveURL(/\/teams$/);
  const dashboard = new DashboardPage(page);
  await dashboard.openTeam(demoTeam.name);
  await dashboard.createDerivation(`Trolley traverse ${Date.now().toString(36)}`, "Cart with pendulum");
  const notebook = new NotebookPage(page);
  await notebook.expectOpen();

  const simulation = new SimulationCell(page);
  await simulation.add();
  await page.getByLabel("theta(t₀)").fill("0.3");
  await page.getByLabel("x'(t₀)").fill("0.5");
  await simulation.setEndTime("8");
  const addPoint = page.getByRole("button", { name: "+ Add point" });
  await addPoint.click();
  await addPoint.click();
  // The trolley on its girder first, then the load hanging from it.
  await expect(page.getByLabel("Point 1 x")).toHaveValue("x");
  await expect(page.getByLabel("Point 1 y")).toHaveValue("0");
  await expect(page.getByLabel("Point 2 x")).toHaveValue("xL");
  await simulation.run();

  // Metres and radians on their own axes.
  for (const unit of ["m", "rad"]) {
    await expect(simulation.chart("coordinates", unit).locator("canvas").first()).toBeVisible();
    await expect(simulation.chart("rates", unit).locator("canvas").first()).toBeVisible();
  }
  await expect(page.getByText("Coordinates (m)")).toBeVisible();
  await expect(page.getByText("Rates (rad/s)")).toBeVisible();
  await expect(page.getByTestId("mechanism-animation").locator("canvas")).toBeVisible();

  // Measured data: the uploaded file is preselected, and the fit says why nothing can be fitted.
  await page.getByText("Measured data and fitting").click();
  await page.getByLabel("Upload measured CSV").setInputFiles({ name: "t2-parked.csv", mimeType: "text/csv", buffer: Buffer.from(trolleyAtRestCsv()) });
  const fileSelect = page.getByTestId("measured-file");
  await expect(fileSelect.locator("option:checked")).toHaveText(/t2-parked\.csv/);
  await page.getByLabel("Fit b").check();
  await page.getByRole("button", { name: "Fit", exact: true }).click();
  const outcome = page.getByTestId("fit-outcome");
  await expect(outcome).toBeVisible({ timeout: 60_000 });
  await expect(outcome).toContainText("Nothing moved");
  await expect(outcome).not.toContainText("Converged");
  await expect(page.getByTestId("fit-not-identifiable")).toContainText("Not identifiable: b.");
  await expect(page.getByTestId("fit-not-identifiable")).toContainText("Data that would identify it");
  await expect(page.getByTestId("fit-residual")).toContainText("x: 0 m RMS");

  const cell = simulation.cell;
  for (const [width, label] of [
    [1280, "desktop"],
    [390, "phone"],
  ] as const) {
    await page.setViewportSize({ width, height: 900 });
    for (const scheme of ["light", "dark"] as const) {
      await page.emulateMedia({ colorScheme: scheme });
      // Let the charts redraw for the theme and width.
      await page.waitForTimeout(400);
      await noSidewaysScroll(page);
      await cell.screenshot({ path: `${artifactsDir}/simulation-cell-${label}-${scheme}.png` });
    }
  }
});

test("a three-link chain draws each link angle in its own colour, light and dark", async ({ page }) => {
  test.setTimeout(180_000);
  await page.setViewportSize({ width: 1280, height: 900 });
  const signIn = new SignInPage(page);
  await signIn.goto();
  await signIn.signIn(analyst.email, demoPassword);
  await expect(page).toHaveURL(/\/teams$/);
  const dashboard = new DashboardPage(page);
  await dashboard.openTeam(demoTeam.name);
  await dashboard.createDerivation(`Hook chain ${Date.now().toString(36)}`, "N-link chain");
  await new NotebookPage(page).expectOpen();
  const simulation = new SimulationCell(page);
  await simulation.add();
  await page.getByLabel("theta1(t₀)").fill("0.6");
  await page.getByLabel("theta2(t₀)").fill("-0.4");
  await page.getByLabel("theta3(t₀)").fill("0.2");
  await simulation.setEndTime("6");
  const addPoint = page.getByRole("button", { name: "+ Add point" });
  for (let k = 0; k < 3; k++) await addPoint.click();
  await expect(page.getByLabel("Point 3 x")).toHaveValue("x3");
  await simulation.run();
  const coordinates = simulation.chart("coordinates");
  await expect(coordinates.locator("canvas").first()).toBeVisible();
  for (const scheme of ["light", "dark"] as const) {
    await page.emulateMedia({ colorScheme: scheme });
    await page.waitForTimeout(400);
    await page
      .getByTestId("simulation-results")
      .last()
      .screenshot({ path: `${artifactsDir}/simulation-chain-${scheme}.png` });
  }
});
