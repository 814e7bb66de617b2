import { StrictMode } from "react";
import { createRoot } from "react-dom/client";
import { QueryClientProvider } from "@tanstack/react-query";
import { RouterProvider } from "react-router-dom";
// Shipped with the bundle: Vite copies the font files, no request leaves the machine.
import "@fontsource/source-serif-4/400.css";
import "@fontsource/source-serif-4/600.css";
import "./index.css";
import { createQueryClient } from "./api/queryClient.ts";
import { createAppRouter } from "./router.tsx";

const root = document.getElementById("root");
if (!root) throw new Error("index.html has no #root element");

const queryClient = createQueryClient();
const router = createAppRouter();

createRoot(root).render(
  <StrictMode>
    <QueryClientProvider client={queryClient}>
      <RouterProvider router={router} />
    </QueryClientProvider>
  </StrictMode>,
);
