import { expect, test } from "@playwright/test";
import { demoDerivations, demoPassword, demoTeam, demoUsers } from "@/db/seed/demo";
import { DashboardPage } from "./pages/dashboard-page";
import { NotebookPage } from "./pages/notebook-page";
import { SignInPage } from "./pages/sign-in-page";
import { SimulationCell } from "./pages/simulation-cell";
import { ViewChoices } from "./pages/view-choices";
import { keepScreenshot } from "./support";

const reviewer = demoUsers.find((user) => user.role === "reviewer")!;
// The derivation waiting for review in the demo team; it has no simulation cell.
const underReview = demoDerivations.find((derivation) => derivation.status === "in_review")!;

test("a reviewer checks a derivation without changing it: form, equilibrium, own simulation, stored run", async ({ page }) => {
  test.setTimeout(150_000);
  const signIn = new SignInPage(page);
  await signIn.goto();
  await signIn.signIn(reviewer.email, demoPassword);
  await expect(page).toHaveURL(/\/teams$/);
  const dashboard = new DashboardPage(page);
  await dashboard.openTeam(demoTeam.name);
  await dashboard.table.getByRole("link", { name: underReview.title }).click();
  const notebook = new NotebookPage(page);
  await notebook.expectOpen();
  await expect(page.getByTestId("read-only-badge")).toBeVisible();

  const view = new ViewChoices(page);
  await view.reset(notebook.id);
  const before = await (await page.request.get(`/api/derivations/${notebook.id}`)).json();
  await page.reload();
  await notebook.waitForResults();

  // The equation form: the reviewer's own choice; the document keeps the author's.
  await expect(view.form).toBeEnabled();
  await view.form.selectOption("mass-matrix");
  await expect(notebook.equations.getByLabel("Mass-matrix form")).toBeVisible();
  await expect(page.getByTestId("view-choice-note").first()).toContainText("the document's is residual form");

  // Another equilibrium: only the linearization is computed again.
  await view.linearization.scrollIntoViewIfNeeded();
  await expect(view.equilibrium).toBeEnabled();
  const options = view.equilibrium.locator("option");
  expect(await options.count()).toBeGreaterThan(1);
  const second = (await options.nth(1).textContent()) ?? "";
  const linearized = page.waitForResponse((response) => response.url().endsWith("/linearize") && response.request().method() === "POST");
  await view.equilibrium.selectOption({ index: 1 });
  expect((await linearized).status()).toBe(200);
  // The engine labels each equilibrium with its stability; the cell shows the chosen one's.
  await expect(view.linearization).toContainText(/\(unstable\)/.test(second) ? "Unstable equilibrium." : "Stable equilibrium.");
  await expect(view.linearization.getByTestId("busy-marker")).toHaveCount(0);
  await keepScreenshot(page, "reviewer-view-choices");

  // Their own simulation of a derivation with no simulation cell, with their own initial state and parameters.
  const own = await view.openOwnSimulation();
  await own.getByLabel("theta(t₀)").fill("0.35");
  await own.getByLabel("End time (s)").fill("4");
  await own.getByLabel("m", { exact: true }).fill("2.1");
  const simulation = new SimulationCell(page);
  await own.getByTestId("simulation-run").click();
  await expect(own.getByTestId("simulation-results")).toBeVisible({ timeout: 45_000 });
  await expect(simulation.chart("coordinates").locator("canvas").first()).toBeVisible();

  // Store it for the team: the server queues the run (202 with the job), a worker runs the same settings and
  // keeps the run under the reviewer's name, and the page then reads the stored run.
  const runsPath = `/api/derivations/${notebook.id}/runs`;
  const queued = page.waitForResponse((response) => response.url().endsWith(runsPath) && response.request().method() === "POST");
  const stored = page.waitForResponse(
    (response) => new URL(response.url()).pathname.startsWith(`${runsPath}/`) && !response.url().endsWith("/csv") && response.request().method() === "GET",
    { timeout: 45_000 },
  );
  await own.getByRole("button", { name: "Run on server and save" }).click();
  expect((await queued).status()).toBe(202);
  const response = await stored;
  expect(response.status()).toBe(200);
  const { run } = await response.json();
  expect(run).toMatchObject({
    status: "completed",
    createdBy: { name: reviewer.name },
    settings: { initialCoordinates: { theta: 0.35 }, parameters: { m: 2.1 }, endTime: 4 },
  });
  await own.getByText(/Stored runs \(\d+\)/).click();
  await expect(own.getByText(reviewer.name).first()).toBeVisible();

  // Nothing of the shared derivation changed, nor who last edited it.
  const after = await (await page.request.get(`/api/derivations/${notebook.id}`)).json();
  expect(after.derivation.updatedAt).toBe(before.derivation.updatedAt);
  expect(after.derivation.content).toEqual(before.derivation.content);

  // The choices are the reviewer's, kept for the next visit.
  await page.reload();
  await notebook.waitForResults();
  await expect(view.form).toHaveValue("mass-matrix");
  await expect(view.equilibrium).toHaveValue("1");
  await expect(view.ownSimulation.getByLabel("theta(t₀)")).toHaveValue("0.35");

  // The phone width: nothing scrolls sideways.
  await page.setViewportSize({ width: 390, height: 844 });
  await view.equilibrium.scrollIntoViewIfNeeded();
  const overflow = await page.evaluate(() => document.documentElement.scrollWidth - document.documentElement.clientWidth);
  expect(overflow).toBeLessThanOrEqual(0);
  await keepScreenshot(page, "reviewer-view-choices-390");
});
