// A signed-in person talking to a running app over HTTP, as a browser would:
// next-auth's credentials sign-in, the session cookie on every request, the app's
// own Origin on writes (the app refuses foreign ones) and JSON bodies.

export interface ApiAnswer<T = Record<string, unknown>> {
  status: number;
  body: T;
}

export interface HttpSession {
  /** Sends one request; a refused or broken connection rejects (the caller decides whether to retry). */
  request<T = Record<string, unknown>>(method: string, path: string, body?: unknown, headers?: Record<string, string>): Promise<ApiAnswer<T>>;
}

/** The cookie jar of one session: name → value, from Set-Cookie lines. */
function keepCookies(jar: Map<string, string>, response: Response): void {
  for (const line of response.headers.getSetCookie()) {
    const [pair] = line.split(";");
    const [name, ...value] = pair!.split("=");
    jar.set(name!.trim(), value.join("="));
  }
}

const cookieHeader = (jar: Map<string, string>) => [...jar].map(([name, value]) => `${name}=${value}`).join("; ");

/**
 * Signs in through next-auth's credentials flow at `base` (the address requests go
 * to) and returns the session. `origin` is the app's configured URL (NEXTAUTH_URL),
 * sent as Origin on writes.
 */
export async function signInOverHttp({
  base,
  origin,
  email,
  password,
}: {
  base: string;
  origin: string;
  email: string;
  password: string;
}): Promise<HttpSession> {
  const jar = new Map<string, string>();
  const csrf = await fetch(`${base}/api/auth/csrf`);
  keepCookies(jar, csrf);
  const { csrfToken } = (await csrf.json()) as { csrfToken: string };
  const signIn = await fetch(`${base}/api/auth/callback/credentials`, {
    method: "POST",
    redirect: "manual",
    headers: { "content-type": "application/x-www-form-urlencoded", cookie: cookieHeader(jar), origin },
    body: new URLSearchParams({ csrfToken, email, password, json: "true" }),
  });
  keepCookies(jar, signIn);
  if (![...jar.keys()].some((name) => name.includes("session-token"))) throw new Error(`signing in as ${email} failed (${signIn.status})`);

  return {
    async request<T>(method: string, path: string, body?: unknown, headers: Record<string, string> = {}): Promise<ApiAnswer<T>> {
      const write = method !== "GET" && method !== "HEAD";
      const response = await fetch(`${base}${path}`, {
        method,
        redirect: "manual",
        headers: {
          cookie: cookieHeader(jar),
          ...(write ? { origin, "content-type": "application/json" } : {}),
          ...headers,
        },
        body: body === undefined ? undefined : JSON.stringify(body),
        signal: AbortSignal.timeout(30_000),
      });
      const text = await response.text();
      let parsed: unknown;
      try {
        parsed = text ? JSON.parse(text) : {};
      } catch {
        parsed = { text };
      }
      return { status: response.status, body: parsed as T };
    },
  };
}
