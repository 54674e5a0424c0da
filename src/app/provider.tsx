import { useState, type ReactNode } from "react";
import { QueryClientProvider } from "@tanstack/react-query";
import { Toaster } from "../components/toaster";
import { meQueryOptions } from "../features/auth/api/get-me";
import { setUnauthorizedHandler } from "../lib/api-client";
import { createQueryClient } from "../lib/query-client";

/**
 * App-wide providers. A 401 from any request means the session is gone: forget the user, and the
 * protected layout sends the person to sign-in with the page they were on kept for afterwards.
 */
export function AppProvider({ children }: { children: ReactNode }) {
  const [queryClient] = useState(() => {
    const client = createQueryClient();
    setUnauthorizedHandler(() => {
      void client.cancelQueries({ predicate: (q) => q.queryKey[0] !== "auth" });
      client.setQueryData(meQueryOptions().queryKey, null);
    });
    return client;
  });
  return (
    <QueryClientProvider client={queryClient}>
      {children}
      <Toaster />
    </QueryClientProvider>
  );
}
