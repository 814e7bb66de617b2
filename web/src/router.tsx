import { createBrowserRouter, Navigate, type RouteObject } from "react-router-dom";
import { RequireSession } from "./auth/RequireSession.tsx";
import { RequirePermission } from "./auth/RequirePermission.tsx";
import { AppShell } from "./components/AppShell.tsx";
import { RouteErrorPage } from "./routes/RouteErrorPage.tsx";
import { SignInPage } from "./routes/SignInPage.tsx";
import { ForgotPasswordPage } from "./routes/ForgotPasswordPage.tsx";
import { ResetPasswordPage } from "./routes/ResetPasswordPage.tsx";
import { BatchesPage } from "./routes/BatchesPage.tsx";
import { BatchDetailPage } from "./routes/BatchDetailPage.tsx";
import { FilesPage } from "./routes/FilesPage.tsx";
import { FileDetailPage } from "./routes/FileDetailPage.tsx";
import { RunsPage } from "./routes/RunsPage.tsx";
import { RunDetailPage } from "./routes/RunDetailPage.tsx";
import { ExportsPage } from "./routes/ExportsPage.tsx";
import { AuditPage } from "./routes/AuditPage.tsx";
import { TokensPage } from "./routes/TokensPage.tsx";
import { UsersPage } from "./routes/UsersPage.tsx";
import { NotFoundPage } from "./routes/NotFoundPage.tsx";

/** Route objects, exported so tests can mount them in a memory router. */
export const routes: RouteObject[] = [
  {
    errorElement: <RouteErrorPage />,
    children: [
      { path: "/sign-in", element: <SignInPage /> },
      { path: "/forgot-password", element: <ForgotPasswordPage /> },
      { path: "/reset-password", element: <ResetPasswordPage /> },
      {
        element: (
          <RequireSession>
            <AppShell />
          </RequireSession>
        ),
        children: [
          { index: true, element: <Navigate to="/batches" replace /> },
          { path: "/batches", element: <BatchesPage /> },
          { path: "/batches/:batchId", element: <BatchDetailPage /> },
          { path: "/files", element: <FilesPage /> },
          { path: "/files/:fileId", element: <FileDetailPage /> },
          { path: "/runs", element: <RunsPage /> },
          { path: "/runs/:runId", element: <RunDetailPage /> },
          {
            path: "/exports",
            element: (
              <RequirePermission permission="export">
                <ExportsPage />
              </RequirePermission>
            ),
          },
          {
            path: "/audit",
            element: (
              <RequirePermission permission="audit">
                <AuditPage />
              </RequirePermission>
            ),
          },
          {
            path: "/tokens",
            element: (
              <RequirePermission permission="ownTokens">
                <TokensPage />
              </RequirePermission>
            ),
          },
          {
            path: "/users",
            element: (
              <RequirePermission permission="manageUsers">
                <UsersPage />
              </RequirePermission>
            ),
          },
          { path: "*", element: <NotFoundPage /> },
        ],
      },
    ],
  },
];

/** Built on demand so importing the routes (tests, tools) does not start a browser router. */
export function createAppRouter() {
  return createBrowserRouter(routes);
}
