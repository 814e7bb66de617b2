import { useState } from "react";
import { describeError } from "../api/client.ts";
import { useRevokeToken, type OwnedTokenDto } from "../api/tokens.ts";
import { formatDate, formatDateTime } from "../format/units.ts";
import { buttonClass } from "./fields.tsx";
import { InlineError } from "./states.tsx";

export function TokenTableHead({ showOwner = false }: { showOwner?: boolean }) {
  const headings = [...(showOwner ? ["Owner"] : []), "Name", "Id", "Created", "Last used", "Expires", "Status"];
  return (
    <thead className="border-b border-line bg-sunken">
      <tr>
        {headings.map((h) => (
          <th key={h} scope="col" className="px-2 py-2 text-left font-semibold">
            {h}
          </th>
        ))}
      </tr>
    </thead>
  );
}

/** One token with a two-step revoke, so a slip of the mouse does not cut off an ingest robot. */
export function TokenRow({ token, showOwner = false }: { token: OwnedTokenDto; showOwner?: boolean }) {
  const revoke = useRevokeToken();
  const [confirming, setConfirming] = useState(false);
  const isRevoked = token.revokedAt !== null;
  // The time the row was first drawn is precise enough for "expired".
  const [now] = useState(() => Date.now());
  const isExpired = !isRevoked && Date.parse(token.expiresAt) <= now;
  return (
    <tr className="border-b border-line last:border-b-0">
      {showOwner && <td className="px-2 py-1.5">{token.owner ? token.owner.email : <span className="text-ink-muted">unknown</span>}</td>}
      <td className="px-2 py-1.5 font-medium">{token.name}</td>
      <td className="px-2 py-1.5 font-mono text-xs">{token.id}</td>
      <td className="px-2 py-1.5">{formatDateTime(token.createdAt)}</td>
      <td className="px-2 py-1.5">{token.lastUsedAt ? formatDateTime(token.lastUsedAt) : <span className="text-ink-muted">never</span>}</td>
      <td className="px-2 py-1.5">{formatDate(token.expiresAt)}</td>
      <td className="px-2 py-1.5">
        {isRevoked ? (
          <span className="text-ink-muted">revoked {formatDateTime(token.revokedAt)}</span>
        ) : isExpired ? (
          <span className="text-ink-muted">expired</span>
        ) : confirming ? (
          <span className="flex flex-wrap items-center gap-2">
            <button type="button" className={buttonClass.danger} disabled={revoke.isPending} onClick={() => revoke.mutate(token.id)}>
              {revoke.isPending ? "Revoking…" : `Yes, revoke “${token.name}”`}
            </button>
            <button type="button" className={buttonClass.secondary} onClick={() => setConfirming(false)}>
              Keep it
            </button>
          </span>
        ) : (
          <button type="button" className={buttonClass.danger} onClick={() => setConfirming(true)}>
            Revoke
          </button>
        )}
        {revoke.isError && <InlineError message={`Not revoked: ${describeError(revoke.error)}`} />}
      </td>
    </tr>
  );
}
