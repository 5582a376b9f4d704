import { createContext, useContext } from "react";

/** The per-request CSP nonce: set on the server for inline hydration scripts, empty in the browser. */
export const NonceContext = createContext<string | undefined>(undefined);
export const useNonce = () => useContext(NonceContext);
