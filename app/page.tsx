import { redirect } from "next/navigation";
import { getSessionUser } from "@/lib/auth/session";

export const dynamic = "force-dynamic";

export default async function Home() {
  redirect((await getSessionUser()) ? "/teams" : "/sign-in");
}
