import { readFile } from "node:fs/promises";
import { expect, test } from "@playwright/test";
import { demoPassword, demoTeam, demoUsers } from "@/db/seed/demo";
import { DashboardPage } from "./pages/dashboard-page";
import { NotebookPage, plainMath } from "./pages/notebook-page";
import { SignInPage } from "./pages/sign-in-page";
import { artifactsDir, keepScreenshot } from "./support";

const analyst = demoUsers.find((user) => user.role === "analyst")!;
const viewer = demoUsers.find((user) => user.role === "viewer")!;

test.describe.configure({ timeout: 240_000 });

test("an analyst enters a double pendulum, evaluates it, exports the model file and imports it again", async ({ page }) => {
  await page.setViewportSize({ width: 1280, height: 800 });
  const signIn = new SignInPage(page);
  await signIn.goto();
  await signIn.signIn(analyst.email, demoPassword);
  await expect(page).toHaveURL(/\/teams$/);

  const dashboard = new DashboardPage(page);
  await dashboard.openTeam(demoTeam.name);
  const title = `Double pendulum hoist ${Date.now().toString(36)}`;
  await dashboard.createDerivation(title);

  const notebook = new NotebookPage(page);
  await notebook.expectOpen();
  await notebook.waitUntilEditable();
  await expect(page.getByTestId("derivation-title")).toHaveValue(title);

  await notebook.addRow("coordinate", { Name: "theta1", Unit: "rad" });
  await notebook.addRow("coordinate", { Name: "theta2", Unit: "rad" });
  for (const [name, unit, value] of [
    ["m1", "kg", "2"],
    ["m2", "kg", "1"],
    ["l1", "m", "1.2"],
    ["l2", "m", "0.8"],
    ["g", "m/s^2", "9.81"],
  ]) {
    await notebook.addRow("parameter", { Name: name!, Unit: unit!, Value: value! });
  }
  await notebook.addRow("definition", { Name: "x1", Expression: "l1*sin(theta1)" });
  await notebook.addRow("definition", { Name: "y1", Expression: "-l1*cos(theta1)" });
  await notebook.addRow("definition", { Name: "x2", Expression: "x1 + l2*sin(theta2)" });
  await notebook.addRow("definition", { Name: "y2", Expression: "y1 - l2*cos(theta2)" });
  await notebook.typeExpression("Kinetic energy T", "1/2*m1*(x1'^2 + y1'^2) + 1/2*m2*(x2'^2 + y2'^2)");
  await notebook.typeExpression("Potential energy V", "m1*g*y1 + m2*g*y2");

  // Every edit is stored as it is typed ("Saved" once the server confirms); Evaluate shows the equations.
  await notebook.waitUntilSaved();
  await notebook.evaluate();
  const equations = await notebook.equationTexts();
  expect(equations).toHaveLength(2);
  // The coupling of the two links: cos(θ1 − θ2) multiplies the other link's acceleration in both
  // equations (a standard result for the planar double pendulum; any dynamics textbook's worked example).
  for (const text of equations) expect(text).toContain("cos(θ1−θ2)");
  // The coupling sits in addressable terms of the engine.
  const couplingTerms = notebook.equations.locator("[data-term]").filter({ hasText: /cos/ });
  expect(await couplingTerms.count()).toBeGreaterThanOrEqual(2);
  expect(plainMath((await couplingTerms.first().textContent()) ?? "")).toContain("cos(θ1−θ2)");
  await keepScreenshot(page, "notebook-double-pendulum");

  // The model file carries what was typed.
  const download = await notebook.export("Model file (.model.json)");
  expect(download.suggestedFilename()).toMatch(/\.model\.json$/);
  const modelPath = `${artifactsDir}/double-pendulum-export.model.json`;
  await download.saveAs(modelPath);
  const model = JSON.parse(await readFile(modelPath, "utf8"));
  expect(model.coordinates.map((c: { name: string }) => c.name)).toEqual(["theta1", "theta2"]);
  expect(model.definitions).toContainEqual({ name: "x2", expr: "x1 + l2*sin(theta2)" });
  expect(model.kinetic).toBe("1/2*m1*(x1'^2 + y1'^2) + 1/2*m2*(x2'^2 + y2'^2)");
  expect(model.parameters).toContainEqual(expect.objectContaining({ name: "g", unit: "m/s^2", value: 9.81 }));
  await page.keyboard.press("Escape");

  // Imported into a new derivation, it derives the same equations.
  const firstId = notebook.id;
  await dashboard.openTeam(demoTeam.name);
  await dashboard.importModelFile(modelPath);
  expect(notebook.id).not.toBe(firstId);
  await notebook.waitForResults();
  expect(await notebook.equationTexts()).toEqual(equations);
  await keepScreenshot(page, "notebook-imported-double-pendulum");

  // Dark mode at the same laptop size: equations stay inside their cell.
  await page.locator("body").click({ position: { x: 5, y: 5 } });
  await page.keyboard.press("Alt+Shift+T");
  await expect(page.locator("html")).toHaveAttribute("data-theme", "dark");
  const overflow = await page.evaluate(() => document.documentElement.scrollWidth - document.documentElement.clientWidth);
  expect(overflow).toBeLessThanOrEqual(0);
  await keepScreenshot(page, "notebook-dark");
  await page.keyboard.press("Alt+Shift+T");

  // A bad file is refused with its field and reason, and nothing is created.
  await dashboard.openTeam(demoTeam.name);
  const total = page.getByTestId("derivations-total");
  await expect(total).toContainText(" of ");
  await expect(total).not.toContainText("updating");
  const before = await total.textContent();
  const badPath = `${artifactsDir}/bad.model.json`;
  await import("node:fs/promises").then((fs) => fs.writeFile(badPath, JSON.stringify({ ...model, coordinates: [{ name: "theta1" }] })));
  await page.getByRole("button", { name: "Import" }).click();
  const dialog = page.getByRole("dialog", { name: "Import a model file" });
  await dialog.getByLabel("Model file").setInputFiles(badPath);
  await dialog.getByRole("button", { name: "Import" }).click();
  await expect(dialog.getByTestId("import-error")).toContainText(/coordinates/);
  await keepScreenshot(page, "import-refused");
  await page.keyboard.press("Escape");
  await page.reload();
  await expect(page.getByTestId("derivations-total")).toHaveText(before!);
});

test("a viewer reads a derivation but cannot edit it, and sends no document write", async ({ page }) => {
  await page.setViewportSize({ width: 1280, height: 800 });
  const signIn = new SignInPage(page);
  await signIn.goto();
  await signIn.signIn(viewer.email, demoPassword);
  // Sign-in finishes (session cookie set) before the next navigation, or that navigation lands back on sign-in.
  await expect(page).toHaveURL(/\/teams$/);
  const dashboard = new DashboardPage(page);
  await dashboard.openTeam(demoTeam.name);
  await dashboard.table.getByRole("link", { name: /Gantry crane: trolley/ }).click();
  const notebook = new NotebookPage(page);
  await notebook.expectOpen();

  const saves: string[] = [];
  page.on("request", (request) => {
    if (request.method() !== "GET" && /\/api\/derivations\/[^/]+$/.test(new URL(request.url()).pathname)) saves.push(request.url());
  });

  await expect(page.getByTestId("read-only-badge")).toBeVisible();
  // Connected to the shared document as a reader: live, and no claim about saving.
  await expect(notebook.connectionStatus).toHaveAttribute("data-state", "live", { timeout: 20_000 });
  await expect(page.getByRole("button", { name: "Add cell" })).toHaveCount(0);
  const name = page.getByRole("textbox", { name: "Name, coordinate 1" });
  await expect(name).toHaveAttribute("readonly", "");
  const before = await name.inputValue();
  await name.click();
  await page.keyboard.type("zz");
  await expect(name).toHaveValue(before);
  const kinetic = page.getByRole("textbox", { name: "Kinetic energy T", exact: true });
  const kineticBefore = await kinetic.textContent();
  expect(kineticBefore).toContain("1/2");
  await kinetic.click();
  await page.keyboard.type("+ 1");
  await expect(kinetic).toHaveText(kineticBefore!);
  // Results are still there to read.
  await notebook.waitForResults();
  await keepScreenshot(page, "notebook-viewer-read-only");
  expect(saves).toEqual([]);

  // The server refuses the viewer's rename (collab.spec.ts shows a viewer's typing reaches no one).
  const response = await page.request.patch(`/api/derivations/${notebook.id}`, { data: { title: "x" } });
  expect(response.status()).toBe(403);
  expect(await response.json()).toMatchObject({ error: { code: "forbidden:derivation" } });
});
