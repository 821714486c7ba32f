import { describe, expectTypeOf, it } from "vitest";
import type { StudyListItem as ClientListItem, StudyView as ClientView } from "@/components/notebook/study/types";
import type { StudyListItem as ServerListItem, StudyView as ServerView } from "@/lib/studies/views";

// The study cell keeps its own copy of the routes' answer types (plain, client-safe).
// These assertions are checked by the type check (`npm run typecheck`): a server shape
// the cell cannot read fails it.
describe("study route types", () => {
  it("the server's answers are what the study cell reads", () => {
    expectTypeOf<ServerView>().toExtend<ClientView>();
    expectTypeOf<ServerListItem>().toExtend<ClientListItem>();
  });
});
