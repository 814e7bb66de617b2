/**
 * The session store: connect-pg-simple's, except that loading a session also loads its signed-in user in
 * the same query (a left join), so `authenticate` needs no second round trip per request. The user row
 * rides on the loaded session under a symbol (neither copied into the session nor saved back, since
 * express-session copies enumerable keys and hashes JSON) and is handed to the request in createSession.
 */
import connectPgSimple from "connect-pg-simple";
import type { Request } from "express";
import session, { type SessionData } from "express-session";
import { User } from "../models/index.ts";

const PgStore = connectPgSimple(session);

const SIGNED_IN_USER = Symbol("signed-in user");
type LoadedSession = SessionData & { [SIGNED_IN_USER]?: User | null };

/** The user each request's session named when it was loaded: null when that user no longer exists. */
const usersOfRequests = new WeakMap<Request, User | null>();

type Callback = (err: unknown, session?: SessionData | null) => void;
/** connect-pg-simple's untyped helpers: one query answering its first row, and the quoted table name. */
interface PgStoreInternals {
  query(sql: string, params: unknown[], fn: (err: unknown, row?: Record<string, unknown>) => void): void;
  quotedTable(): string;
  pruneTimer?: unknown;
}

let userColumns: string | null = null;
/** `u.<column> as "<attribute>"` for every User attribute, so a row builds a User like findByPk's. */
function userSelectList(): string {
  userColumns ??= Object.entries(User.getAttributes())
    .map(([name, attribute]) => `u.${quoteIdent(attribute.field ?? name)} as ${quoteIdent(`user.${name}`)}`)
    .join(", ");
  return userColumns;
}

const quoteIdent = (name: string): string => `"${name.replaceAll('"', '""')}"`;

export class SessionUserStore extends PgStore {
  override get(sid: string, callback: Callback): void {
    const self = this as unknown as PgStoreInternals;
    // connect-pg-simple starts its prune timer from its own get; ours starts it with a first prune.
    if (!self.pruneTimer) this.pruneSessions(() => undefined);
    // A userId that is not a small integer (never written so) joins nothing rather than failing the cast.
    const sql =
      `select s.sess, ${userSelectList()} from ${self.quotedTable()} s ` +
      `left join users u on u.id = case when s.sess->>'userId' ~ '^[0-9]{1,9}$' then (s.sess->>'userId')::int end ` +
      `where s.sid = $1 and s.expire >= to_timestamp($2)`;
    self.query(sql, [sid, Math.ceil(Date.now() / 1000)], (err, row) => {
      if (err) return callback(err);
      if (!row) return callback(null, null);
      let sess: LoadedSession;
      try {
        sess = (typeof row.sess === "string" ? JSON.parse(row.sess) : row.sess) as LoadedSession;
      } catch {
        // As connect-pg-simple does: an unreadable session is dropped.
        return this.destroy(sid, callback);
      }
      if (sess.userId !== undefined) sess[SIGNED_IN_USER] = row["user.id"] == null ? null : buildUser(row);
      callback(null, sess);
    });
  }

  override createSession(req: Request, sess: SessionData): session.Session & SessionData {
    const user = (sess as LoadedSession)[SIGNED_IN_USER];
    if (user !== undefined) usersOfRequests.set(req, user);
    return super.createSession(req, sess);
  }
}

function buildUser(row: Record<string, unknown>): User {
  const values: Record<string, unknown> = {};
  for (const name of Object.keys(User.getAttributes())) values[name] = row[`user.${name}`];
  return User.build(values as never, { isNewRecord: false, raw: true });
}

/**
 * The user loaded with this request's session, if it is the one the session names now: a User, null when
 * that user is gone, undefined when the store did not load it (then the caller reads the user itself).
 */
export function sessionUserOf(req: Request, userId: number): User | null | undefined {
  const user = usersOfRequests.get(req);
  if (user === undefined) return undefined;
  if (user === null) return null;
  return user.id === userId ? user : undefined;
}
