import { NotFoundContent } from "@/components/page-problems";

// A missing (or another team's) derivation or team: shown inside the app's layout, under the site header.
export default function AppNotFound() {
  return <NotFoundContent />;
}
