import { data } from "react-router";
import { isSetError } from "./errors";

/** For page loaders: a set refusal becomes our own 404/403/… page; anything else is rethrown. */
export async function orSetErrorPage<T>(run: () => Promise<T>): Promise<T> {
  try {
    return await run();
  } catch (e) {
    if (isSetError(e)) throw data({ message: e.message }, { status: e.status, statusText: e.status === 404 ? "Not found" : e.status === 403 ? "Forbidden" : "Refused" });
    throw e;
  }
}
