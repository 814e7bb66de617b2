import { render } from "@testing-library/react";
import { QueryClientProvider } from "@tanstack/react-query";
import { createMemoryRouter, RouterProvider } from "react-router-dom";
import { createQueryClient } from "../../web/src/api/queryClient.ts";
import { routes } from "../../web/src/router.tsx";

/** The whole portal in a memory router with a fresh client (no retries) per test. */
export function renderApp(path: string) {
  const client = createQueryClient({ retry: false });
  const router = createMemoryRouter(routes, { initialEntries: [path] });
  const view = render(
    <QueryClientProvider client={client}>
      <RouterProvider router={router} />
    </QueryClientProvider>,
  );
  return { ...view, client, router };
}
