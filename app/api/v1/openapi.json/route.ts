import { apiRoute } from "@/lib/api/route";
import openapi from "@/lib/public-api/openapi.json";

/**
 * The public API's OpenAPI 3.1 description. It describes the API, not any
 * team's data, so it needs no token (tests/integration/public-api.test.ts
 * checks it against the specification and the routes' real answers).
 */
export const GET = apiRoute(async () => Response.json(openapi, { headers: { "cache-control": "public, max-age=300" } }));
