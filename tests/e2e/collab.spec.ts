import { expect, test, type Browser, type Page } from "@playwright/test";
import { demoPassword, demoTeam, demoUsers } from "@/db/seed/demo";
import { DashboardPage } from "./pages/dashboard-page";
import { NotebookPage } from "./pages/notebook-page";
import { SignInPage } from "./pages/sign-in-page";
import { keepScreenshot } from "./support";

const analyst = demoUsers.find((user) => user.role === "analyst")!;
const lead = demoUsers.find((user) => user.role === "lead")!;
const viewer = demoUsers.find((user) => user.role === "viewer")!;

test.describe.configure({ timeout: 180_000 });

/** A signed-in page of its own browser context (its own cookies), like a second person's browser. */
async function personPage(browser: Browser, person: { email: string }, width = 1280): Promise<Page> {
  const context = await browser.newContext({ viewport: { width, height: 900 } });
  const page = await context.newPage();
  const signIn = new SignInPage(page);
  await signIn.goto();
  await signIn.signIn(person.email, demoPassword);
  await expect(page).toHaveURL(/\/teams$/);
  return page;
}

const kinetic = (page: Page) => page.locator('.cm-content[aria-label="Kinetic energy T"]');

/** Brings the kinetic energy on screen: its CodeMirror editor exists only there (or while focused). */
async function showKinetic(page: Page): Promise<void> {
  await page.locator('[data-kind="kinetic"]').scrollIntoViewIfNeeded();
  await expect(kinetic(page)).toBeVisible();
}

/** The editor's text, without the remote carets CodeMirror draws inside it (they carry names). */
function editorText(page: Page): Promise<string> {
  return kinetic(page).evaluate((element) => {
    const copy = element.cloneNode(true) as HTMLElement;
    for (const caret of copy.querySelectorAll(".cm-ySelectionCaret")) caret.remove();
    return (copy.textContent ?? "").replace(/\u2060/g, "");
  });
}

/** Types at the start or the end of the kinetic energy (CodeMirror bound to the shared text). */
async function typeInKinetic(page: Page, where: "start" | "end", text: string): Promise<void> {
  await showKinetic(page);
  await kinetic(page).click();
  await expect(kinetic(page)).toBeFocused();
  await page.keyboard.press(where === "start" ? "Home" : "End");
  await page.keyboard.type(text, { delay: 20 });
}

test("two people edit the same cell at once and both end with the same text, with each other's presence", async ({ browser }) => {
  const first = await personPage(browser, analyst);
  const dashboard = new DashboardPage(first);
  await dashboard.openTeam(demoTeam.name);
  await dashboard.createDerivation(`Trolley sway, shared ${Date.now().toString(36)}`, "Cart with pendulum");
  const mine = new NotebookPage(first);
  await mine.expectOpen();
  await mine.waitUntilEditable();
  const url = first.url();

  const second = await personPage(browser, lead);
  await second.goto(url);
  const theirs = new NotebookPage(second);
  await theirs.expectOpen();
  await theirs.waitUntilEditable();

  // Both see both, in their colours.
  await expect(first.getByTestId("presence-avatar")).toHaveCount(2);
  await expect(second.getByTestId("presence-avatar")).toHaveCount(2);
  await expect(first.getByTestId("presence")).toHaveAttribute("aria-label", `Viewing now: ${analyst.name} (you), ${lead.name}`);

  await showKinetic(first);
  const before = await editorText(first);
  expect(before.length).toBeGreaterThan(5);
  // The same field, concurrently: one types at the end, the other at the start.
  await Promise.all([typeInKinetic(first, "end", " + 0*x"), typeInKinetic(second, "start", "0*x + ")]);
  const expected = `0*x + ${before} + 0*x`;
  await expect.poll(() => editorText(first)).toBe(expected);
  await expect.poll(() => editorText(second)).toBe(expected);
  // The other person's cursor, named, in the field they are typing in.
  await expect(first.locator(".hn-remote-name", { hasText: lead.name })).toBeVisible();
  await expect(second.locator(".hn-remote-name", { hasText: analyst.name })).toBeVisible();
  await mine.waitUntilSaved();
  await theirs.waitUntilSaved();
  await keepScreenshot(first, "collab-two-editors");

  // Derived results follow anyone's edit: the other page's equations are marked stale, then current again.
  await theirs.evaluate();
  await first.getByRole("textbox", { name: "Potential energy V", exact: true }).click();
  await first.keyboard.press("End");
  await first.keyboard.type(" + 0");
  await expect(second.getByTestId("stale-marker").first()).toBeVisible();
  await expect(second.getByTestId("evaluation-status")).toHaveAttribute("data-state", "current", { timeout: 45_000 });
  await mine.waitUntilSaved();

  // After a reload the stored document holds both people's typing.
  await second.reload();
  await theirs.waitUntilEditable();
  await showKinetic(second);
  await expect.poll(() => editorText(second)).toBe(expected);

  // A phone-width look at the same page (presence and connection state wrap under the title).
  const phone = await personPage(browser, lead, 390);
  await phone.goto(url);
  await new NotebookPage(phone).waitUntilEditable();
  await expect(phone.getByTestId("presence-avatar")).toHaveCount(2);
  await keepScreenshot(phone, "collab-phone");
  await phone.context().close();
  await first.context().close();
  await second.context().close();
});

test("a viewer's typed edit reaches no one, while the viewer's presence shows", async ({ browser }) => {
  const editor = await personPage(browser, analyst);
  const dashboard = new DashboardPage(editor);
  await dashboard.openTeam(demoTeam.name);
  await dashboard.createDerivation(`Hoist drum, read-only check ${Date.now().toString(36)}`, "Cart with pendulum");
  const notebook = new NotebookPage(editor);
  await notebook.waitUntilEditable();
  const url = editor.url();
  await showKinetic(editor);
  const before = await editorText(editor);

  const reader = await personPage(browser, viewer);
  await reader.goto(url);
  const readerNotebook = new NotebookPage(reader);
  await expect(readerNotebook.connectionStatus).toHaveAttribute("data-state", "live", { timeout: 20_000 });
  await expect(reader.getByTestId("read-only-badge")).toBeVisible();
  await expect(editor.getByTestId("presence")).toHaveAttribute("aria-label", `Viewing now: ${analyst.name} (you), ${viewer.name}`);

  // The viewer types into the expression and a table field: read-only editors take nothing (and the
  // collaboration server would drop a read-only connection's updates anyway).
  await showKinetic(reader);
  await kinetic(reader).click();
  await reader.keyboard.type("+ 99*x");
  await reader.getByRole("textbox", { name: "Name, coordinate 1" }).click();
  await reader.keyboard.type("zz");
  // The table field took the focus and the kinetic cell may have left the screen (editors mount only there).
  await showKinetic(reader);
  await expect.poll(() => editorText(reader)).toBe(before);
  await editor.waitForTimeout(1_500);
  await showKinetic(editor);
  await expect.poll(() => editorText(editor)).toBe(before);
  await expect(editor.getByRole("textbox", { name: "Name, coordinate 1" })).toHaveValue("x");
  await keepScreenshot(reader, "collab-viewer");

  await reader.reload();
  await expect(readerNotebook.connectionStatus).toHaveAttribute("data-state", "live", { timeout: 20_000 });
  await expect(reader.getByRole("textbox", { name: "Name, coordinate 1" })).toHaveValue("x");
  await reader.context().close();
  await editor.context().close();
});

test("a refused token shows the reason and the page stops retrying", async ({ browser }) => {
  const page = await personPage(browser, analyst);
  let tickets = 0;
  // A forged token in place of the one the route issued: the collaboration server closes with 4401.
  await page.route("**/api/derivations/*/collab-token", async (route) => {
    tickets += 1;
    const response = await route.fetch();
    const ticket = await response.json();
    await route.fulfill({ response, json: { ...ticket, token: `${ticket.token.slice(0, -4)}AAAA` } });
  });
  const dashboard = new DashboardPage(page);
  await dashboard.openTeam(demoTeam.name);
  await dashboard.table.getByRole("link", { name: /Gantry crane: trolley/ }).click();
  const notebook = new NotebookPage(page);
  await notebook.expectOpen();
  await expect(notebook.connectionStatus).toHaveAttribute("data-state", "refused", { timeout: 20_000 });
  await expect(notebook.connectionStatus).toContainText(/^Refused: /);
  await expect(page.getByRole("button", { name: "Add cell" })).toHaveCount(0);
  await keepScreenshot(page, "collab-refused");
  // One fresh ticket is tried for an expired-looking one, then nothing more.
  const asked = tickets;
  expect(asked).toBeLessThanOrEqual(2);
  await page.waitForTimeout(3_000);
  expect(tickets).toBe(asked);
  await page.context().close();
});

test("an editor whose role is changed to viewer is told so at once, and the page stops editing", async ({ browser }) => {
  const page = await personPage(browser, analyst);
  const leadPage = await personPage(browser, lead);
  // The lead's requests go from the lead's page, as the team settings page sends them (same origin, session cookie).
  const leadFetch = (url: string, init?: { method: string; body: string }) =>
    leadPage.evaluate(
      async ({ url, init }) => {
        const response = await fetch(url, init ? { ...init, headers: { "content-type": "application/json" } } : undefined);
        return { status: response.status, body: (await response.json().catch(() => null)) as unknown };
      },
      { url, init },
    );
  const teams = (await leadFetch("/api/teams")).body as { teams: { id: string; name: string }[] };
  const teamId = teams.teams.find((team) => team.name === demoTeam.name)!.id;
  const members = (await leadFetch(`/api/teams/${teamId}/members`)).body as { members: { userId: string; email: string }[] };
  const analystId = members.members.find((member) => member.email === analyst.email)!.userId;
  const setRole = async (role: string) => {
    const answer = await leadFetch(`/api/teams/${teamId}/members/${analystId}`, { method: "PATCH", body: JSON.stringify({ role }) });
    expect(answer.status).toBe(200);
  };
  try {
    const dashboard = new DashboardPage(page);
    await dashboard.openTeam(demoTeam.name);
    await dashboard.createDerivation(`Hoist brake check ${Date.now().toString(36)}`, "Single pendulum");
    const notebook = new NotebookPage(page);
    await notebook.expectOpen();
    await notebook.waitUntilEditable();

    await setRole("viewer");

    await expect(notebook.connectionStatus).toHaveAttribute("data-state", "refused", { timeout: 20_000 });
    await expect(notebook.connectionStatus).toContainText("Your role in this team changed and no longer lets you edit; reload to read it.");
    await expect(page.getByRole("button", { name: "Add cell" })).toHaveCount(0);
    await keepScreenshot(page, "collab-role-changed");
    // Reloaded, the page reads the derivation as a viewer.
    await page.reload();
    await notebook.expectOpen();
    await expect(page.getByRole("button", { name: "Add cell" })).toHaveCount(0);
  } finally {
    await setRole("analyst");
    await page.context().close();
    await leadPage.context().close();
  }
});
