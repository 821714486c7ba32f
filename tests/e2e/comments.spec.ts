import { expect, test } from "@playwright/test";
import { demoDerivations, demoPassword, demoTeam, demoUsers } from "@/db/seed/demo";
import { CommentsPanel } from "./pages/comments-panel";
import { DashboardPage } from "./pages/dashboard-page";
import { NotebookPage } from "./pages/notebook-page";
import { SignInPage } from "./pages/sign-in-page";
import { artifactsDir, keepScreenshot } from "./support";

const reviewer = demoUsers.find((user) => user.role === "reviewer")!;
const lead = demoUsers.find((user) => user.role === "lead")!;
const viewer = demoUsers.find((user) => user.role === "viewer")!;
const underReview = demoDerivations.find((derivation) => derivation.status === "in_review")!;

async function openAs(page: import("@playwright/test").Page, email: string) {
  const signIn = new SignInPage(page);
  await signIn.goto();
  await signIn.signIn(email, demoPassword);
  await expect(page).toHaveURL(/\/teams$/);
  const dashboard = new DashboardPage(page);
  await dashboard.openTeam(demoTeam.name);
  await dashboard.table.getByRole("link", { name: underReview.title }).click();
  const notebook = new NotebookPage(page);
  await notebook.expectOpen();
  await notebook.waitForResults();
  return notebook;
}

test("a reviewer comments on a term with a mention; a viewer reads it", async ({ browser }) => {
  test.setTimeout(150_000);
  const reviewerPage = await browser.newPage({ viewport: { width: 1280, height: 900 } });
  await openAs(reviewerPage, reviewer.email);
  const comments = new CommentsPanel(reviewerPage);

  const term = await comments.chooseTerm(1);
  await expect(comments.panel.getByTestId("new-thread")).toBeVisible();
  await comments.write(" is this sign right for the angle measured from the vertical?", { typed: lead.name.split(" ")[0]!.slice(0, 3), name: lead.name });
  await comments.panel.getByRole("button", { name: "Comment", exact: true }).click();
  await expect(comments.threads).toHaveCount(1);
  await expect(comments.threads.first()).toContainText(`@${lead.name} is this sign right`);
  // The term now carries a count, and so does the equations cell's margin.
  await expect(term).toHaveAttribute("data-comments", "1");
  await expect(reviewerPage.getByTestId("cell-comment-count").first()).toHaveText("1");
  await keepScreenshot(reviewerPage, "comments-term-thread-desktop");
  // The panel is fixed to the window: a window-sized picture shows it beside the equations.
  await reviewerPage.screenshot({ path: `${artifactsDir}/comments-panel-desktop-window.png` });

  // A reply, then the thread's author resolves it; the "unresolved" filter hides it.
  await comments.write("Checked against the free-body sketch: it is.");
  await comments.panel.getByRole("button", { name: "Reply", exact: true }).click();
  await expect(comments.threads.first().getByTestId("comment")).toHaveCount(2);
  await comments.panel.getByRole("button", { name: "Resolve", exact: true }).click();
  await expect(comments.panel.getByTestId("no-threads")).toBeVisible();
  await comments.panel.getByRole("button", { name: "Unresolved", exact: true }).click();
  await expect(comments.threads.first()).toHaveAttribute("data-status", "resolved");
  await comments.panel.getByRole("button", { name: "Reopen", exact: true }).click();
  await expect(comments.threads.first()).toHaveAttribute("data-status", "open");
  await reviewerPage.close();

  // The viewer reads the thread at phone width, with no box to write in.
  const viewerPage = await browser.newPage({ viewport: { width: 390, height: 844 } });
  await openAs(viewerPage, viewer.email);
  const read = new CommentsPanel(viewerPage);
  await read.open();
  await expect(read.threads).toHaveCount(1);
  await read.threads.first().getByRole("button").first().click();
  await expect(read.threads.first().getByTestId("comment")).toHaveCount(2);
  await expect(read.panel.getByTestId("comment-box")).toHaveCount(0);
  await expect(read.panel).toContainText("Your role reads comments");
  await keepScreenshot(viewerPage, "comments-viewer-390");
  await viewerPage.screenshot({ path: `${artifactsDir}/comments-viewer-390-window.png` });
  await viewerPage.close();
});
