import { expect, test, type Page } from "@playwright/test";
import { demoPassword, demoTeam, demoUsers } from "@/db/seed/demo";
import { DashboardPage } from "./pages/dashboard-page";
import { NotebookPage } from "./pages/notebook-page";
import { SignInPage } from "./pages/sign-in-page";
import { SimulationCell } from "./pages/simulation-cell";
import { keepScreenshot } from "./support";

// proxy.ts sets these on every page and route (lib/security/headers.ts).
test("pages carry a nonce-based policy without eval (WebAssembly compilation only); API answers allow nothing", async ({ request }) => {
  const first = await request.get("/sign-in");
  const second = await request.get("/sign-in");
  const policy = first.headers()["content-security-policy"]!;
  // WebAssembly compilation (the simulator's generated module) and nothing broader: no 'unsafe-eval'.
  expect(policy).toMatch(/script-src 'self' 'nonce-[A-Za-z0-9+/=]+' 'strict-dynamic' 'wasm-unsafe-eval'(;|$)/);
  expect(policy).not.toContain("'unsafe-eval'");
  expect(policy).toContain("frame-ancestors 'none'");
  expect(policy).toContain("object-src 'none'");
  // A fresh nonce per response, and the page's scripts carry it.
  const nonce = /'nonce-([^']+)'/.exec(policy)![1]!;
  expect(second.headers()["content-security-policy"]).not.toContain(nonce);
  expect(await first.text()).toContain(`nonce="${nonce}"`);
  for (const response of [first, await request.get("/api/health")]) {
    const headers = response.headers();
    expect(headers["x-frame-options"]).toBe("DENY");
    expect(headers["x-content-type-options"]).toBe("nosniff");
    expect(headers["referrer-policy"]).toBe("same-origin");
  }
  expect((await request.get("/api/health")).headers()["content-security-policy"]).toBe("default-src 'none'; frame-ancestors 'none'");
});

/** Collects every CSP violation the page reports, from the DOM event and from the console. */
async function watchViolations(page: Page): Promise<string[]> {
  const violations: string[] = [];
  page.on("console", (message) => {
    if (/Content Security Policy|Refused to (execute|load|apply|evaluate|connect|create)/i.test(message.text())) violations.push(message.text());
  });
  await page.exposeFunction("reportCspViolation", (text: string) => violations.push(text));
  await page.addInitScript(() => {
    document.addEventListener("securitypolicyviolation", (event) => {
      (window as unknown as { reportCspViolation: (text: string) => void }).reportCspViolation(
        `${event.violatedDirective} blocked ${event.blockedURI || "inline"} at ${event.sourceFile}:${event.lineNumber}`,
      );
    });
  });
  return violations;
}

const analyst = demoUsers.find((user) => user.role === "analyst")!;

test("KaTeX, CodeMirror, charts and the simulation worker run under the policy with no violation", async ({ page }) => {
  test.setTimeout(150_000);
  const violations = await watchViolations(page);
  const signIn = new SignInPage(page);
  await signIn.goto();
  await signIn.signIn(analyst.email, demoPassword);
  await expect(page).toHaveURL(/\/teams$/);
  const dashboard = new DashboardPage(page);
  await dashboard.openTeam(demoTeam.name);

  // An approved demo derivation: its equations are KaTeX.
  await page.getByRole("link", { name: "Gantry crane: trolley with swinging load" }).first().click();
  const notebook = new NotebookPage(page);
  await notebook.expectOpen();
  await notebook.waitForResults();
  await expect(page.locator(".katex").first()).toBeVisible();
  await keepScreenshot(page, "csp-katex-notebook");

  // A new derivation: CodeMirror editors, evaluation, then the simulation worker and uPlot charts.
  await page.goto("/teams");
  await dashboard.openTeam(demoTeam.name);
  await dashboard.createDerivation(`Jib swing under CSP ${Date.now().toString(36)}`);
  await notebook.expectOpen();
  await notebook.addRow("coordinate", { Name: "theta", Unit: "rad" });
  for (const [name, unit, value] of [
    ["m", "kg", "25"],
    ["l", "m", "2"],
    ["g", "m/s^2", "9.81"],
  ]) {
    await notebook.addRow("parameter", { Name: name!, Unit: unit!, Value: value! });
  }
  await notebook.typeExpression("Kinetic energy T", "1/2*m*l^2*theta'^2");
  await notebook.typeExpression("Potential energy V", "-m*g*l*cos(theta)");
  await expect(page.locator(".cm-editor").first()).toBeVisible();
  const simulation = new SimulationCell(page);
  await simulation.add();
  await page.getByLabel("theta(t₀)").fill("0.3");
  await simulation.setEndTime("4");
  await simulation.run();
  await expect(simulation.chart("coordinates").locator("canvas").first()).toBeVisible();
  await expect(page.locator(".katex").first()).toBeVisible();
  await keepScreenshot(page, "csp-simulation");

  expect(violations).toEqual([]);
});
