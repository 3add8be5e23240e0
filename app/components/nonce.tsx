import { createContext, useContext } from "react";

// The per-request Content-Security-Policy nonce, provided by entry.server.tsx during server rendering.
export const NonceContext = createContext<string | undefined>(undefined);

export function useNonce(): string | undefined {
  return useContext(NonceContext);
}
