import { data } from "react-router";
import type { Route } from "./+types/not-found";

export function loader(_: Route.LoaderArgs) {
  throw data({ message: "Not found" }, { status: 404 });
}

export default function NotFound() {
  return null;
}
