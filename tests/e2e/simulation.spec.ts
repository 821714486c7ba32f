import { expect, test } from "@playwright/test";
import { demoPassword, demoTeam, demoUsers } from "@/db/seed/demo";
import { DashboardPage } from "./pages/dashboard-page";
import { NotebookPage } from "./pages/notebook-page";
import { SignInPage } from "./pages/sign-in-page";
import { SimulationCell } from "./pages/simulation-cell";
import { keepScreenshot } from "./support";

const analyst = demoUsers.find((user) => user.role === "analyst")!;

test("an analyst simulates a derivation in the browser and sees the charts and the energy drift", async ({ page }) => {
  test.setTimeout(120_000);
  const signIn = new SignInPage(page);
  await signIn.goto();
  await signIn.signIn(analyst.email, demoPassword);
  await expect(page).toHaveURL(/\/teams$/);
  const dashboard = new DashboardPage(page);
  await dashboard.openTeam(demoTeam.name);
  // A hook block on a cable, written out: no dissipation and no applied force, so the energy function is conserved.
  await dashboard.createDerivation(`Hook block swing ${Date.now().toString(36)}`);
  const notebook = new NotebookPage(page);
  await notebook.expectOpen();
  await notebook.addRow("coordinate", { Name: "theta", Unit: "rad" });
  for (const [name, unit, value] of [
    ["m", "kg", "40"],
    ["l", "m", "3.5"],
    ["g", "m/s^2", "9.81"],
  ]) {
    await notebook.addRow("parameter", { Name: name!, Unit: unit!, Value: value! });
  }
  await notebook.addRow("definition", { Name: "xb", Expression: "l*sin(theta)" });
  await notebook.addRow("definition", { Name: "yb", Expression: "-l*cos(theta)" });
  await notebook.typeExpression("Kinetic energy T", "1/2*m*(xb'^2 + yb'^2)");
  await notebook.typeExpression("Potential energy V", "m*g*yb");

  const simulation = new SimulationCell(page);
  await simulation.add();
  await page.getByLabel("theta(t₀)").fill("0.5");
  await simulation.setEndTime("8");
  await page.getByRole("button", { name: "+ Add point" }).click();
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

  // A conservative model: the drift is checked, and at tolerance 1e-8 it stays far under the 1e-5 threshold.
  await expect(page.getByTestId("energy-drift")).toContainText("Within the threshold");
  const drift = Number(await simulation.energyDrift().textContent());
  expect(drift).toBeGreaterThanOrEqual(0);
  expect(drift).toBeLessThan(1e-5);

  // The charts stay inside the page: nothing scrolls sideways.
  const overflow = await page.evaluate(() => document.documentElement.scrollWidth - document.documentElement.clientWidth);
  expect(overflow).toBeLessThanOrEqual(0);
  await expect(page.getByTestId("mechanism-animation").locator("canvas")).toBeVisible();
  await simulation.chart("coordinates").scrollIntoViewIfNeeded();
  await keepScreenshot(page, "simulation-cell");
});
