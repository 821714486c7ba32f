import { afterAll, beforeAll, beforeEach, describe, expect, it, vi } from "vitest";

vi.mock("@/lib/auth/session", async () => (await import("./support/session")).sessionModule);

import * as importRoute from "@/app/api/teams/[teamId]/derivations/import/route";
import * as derivationsRoute from "@/app/api/teams/[teamId]/derivations/route";
import { closeDatabase } from "@/db/client";
import { formRequest, jsonRequest, makeTeam, params, resetDatabase, type TeamFixture } from "./support/fixtures";
import { signInAs, signOut } from "./support/session";

let kestrel: TeamFixture;

beforeAll(async () => {
  await resetDatabase();
  kestrel = await makeTeam("Kestrel import desk");
});
beforeEach(() => signOut());
afterAll(async () => {
  await closeDatabase();
});

const teamParams = () => params({ teamId: kestrel.team.id });

async function importText(text: string): Promise<Response> {
  signInAs(kestrel.members.analyst);
  const form = new FormData();
  form.set("file", new File([text], "gantry.model.json", { type: "application/json" }));
  return importRoute.POST(await formRequest(`/api/teams/${kestrel.team.id}/derivations/import`, form), teamParams());
}

async function derivationCount(): Promise<number> {
  signInAs(kestrel.members.analyst);
  const body = await (await derivationsRoute.GET(jsonRequest("/", "GET"), teamParams())).json();
  return body.total ?? body.derivations.length;
}

describe("model file import errors", () => {
  it("reports every malformed line of a file at once, each with line and column, and creates nothing", async () => {
    const before = await derivationCount();
    const text = ["{", '  "title": "Gantry"', '  "coordinates": [{ "name": "x", "unit": "m" }],', '  "kinetic": 1/2,', "}"].join("\n");
    const response = await importText(text);
    expect(response.status).toBe(422);
    const { error } = await response.json();
    expect(error.message).toBe("The file has 3 problems.");
    expect(error.fieldErrors.file).toEqual([
      'line 3, column 3: a "," is missing before this',
      'line 4, column 15: unexpected character "/"',
      'line 5, column 1: a property name in double quotes is expected (a comma too many before "}"?)',
    ]);
    expect(await derivationCount()).toBe(before);
  });

  it("reports every model problem of a well-formed file at once", async () => {
    const model = {
      title: "Gantry",
      coordinates: [
        { name: "x", unit: "m" },
        { name: "θ", unit: "rad" },
      ],
      parameters: [{ name: "m", unit: "kg" }],
      kinetic: "1/2*m*x'^2",
      potential: "k*x",
    };
    const response = await importText(JSON.stringify(model));
    expect(response.status).toBe(422);
    const { error } = await response.json();
    expect(error.fieldErrors).toEqual({ "coordinates[1].name": ['"θ": write Greek letters by name (θ as "theta"); they are shown as the letter'] });

    const fixed = await importText(JSON.stringify({ ...model, coordinates: [{ name: "x", unit: "m" }], potential: "k*x + c*y" }));
    const body = await fixed.json();
    expect(body.error.message).toBe("The file has 3 problems.");
    expect(body.error.fieldErrors).toEqual({ potential: ['column 1: unknown symbol "k"', 'column 7: unknown symbol "c"', 'column 9: unknown symbol "y"'] });
    expect(body.error.details.diagnostics.map((d: { column: number }) => d.column)).toEqual([1, 7, 9]);
  });
});
