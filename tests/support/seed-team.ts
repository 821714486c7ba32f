// Seeds one team with a member per role into the database DATABASE_URL names and
// prints it as JSON ({ teamId, password, members: { lead, analyst, reviewer, viewer } }),
// for tests that run the app as separate processes and sign in over HTTP:
//   node --conditions=react-server --import tsx tests/support/seed-team.ts "Team name"
// Far quicker than the demo seed, which also evaluates the demo derivations.
import { closeDatabase } from "@/db/client";
import { makeTeam, testPassword } from "../integration/support/fixtures";

const fixture = await makeTeam(process.argv[2] ?? "Kestrel test bench");
process.stdout.write(`${JSON.stringify({ teamId: fixture.team.id, password: testPassword, members: fixture.members })}\n`);
await closeDatabase();
