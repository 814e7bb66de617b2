/** Types of what middleware puts on res.locals and in the session. */
import type { ReceivedUpload } from "./middleware/reportUpload.ts";
import type { ApiToken, Batch, Collection, FileResult, User } from "./models/index.ts";

export interface AuthContext {
  user: User;
  via: "session" | "token";
  tokenId: string | null;
}

declare global {
  // eslint-disable-next-line @typescript-eslint/no-namespace
  namespace Express {
    interface Locals {
      requestId: string;
      auth?: AuthContext;
      file?: FileResult;
      batch?: Batch;
      targetUser?: User;
      token?: ApiToken;
      collection?: Collection;
      /** A multipart report upload, read and checked (middleware/reportUpload.ts). */
      upload?: ReceivedUpload;
    }
  }
}

declare module "express-session" {
  interface SessionData {
    userId: number;
    signedInAt: string;
  }
}

export {};
