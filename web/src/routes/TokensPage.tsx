import { useState, type FormEvent } from "react";
import type { CreatedTokenDto } from "@tidemark/shared/types/api";
import { describeError } from "../api/client.ts";
import { useCliPackage, useCreateToken, useMyTokens } from "../api/tokens.ts";
import { CopyButton } from "../components/CopyButton.tsx";
import { TokenRow, TokenTableHead } from "../components/TokenRow.tsx";
import { PageHeader } from "../components/PageHeader.tsx";
import { buttonClass, SelectField, TextField } from "../components/fields.tsx";
import { formatDate } from "../format/units.ts";
import { EmptyState, ErrorState, InlineError, LoadingState } from "../components/states.tsx";

function CommandLine({ command, label, testId }: { command: string; label: string; testId: string }) {
  return (
    <div className="mt-1 flex flex-wrap items-center gap-2">
      <code className="min-w-0 flex-1 rounded border border-line-strong bg-surface px-2 py-1.5 font-mono text-sm break-all select-all" data-testid={testId}>
        {command}
      </code>
      <CopyButton text={command} label={label} />
    </div>
  );
}

/** The one-line install of the self-contained CLI this server offers (npm run pack:cli), when it offers one. */
function InstallCli({ token }: { token: CreatedTokenDto | null }) {
  const pkg = useCliPackage();
  if (!pkg.data) return null;
  const server = new URL(pkg.data.url).origin;
  return (
    <section aria-label="Install the tidemark command" className="mb-4 rounded-md border border-line bg-surface p-3 text-sm">
      <h2 className="text-base">Install the tidemark command (version {pkg.data.version})</h2>
      <p className="mt-1">On a studio workstation or ingest server with Node.js 20 or later:</p>
      <CommandLine command={pkg.data.installCommand} label="Copy install command" testId="cli-install" />
      <p className="mt-2">Then sign it in to this server{token ? " with the new token" : ""}:</p>
      <CommandLine
        command={`tidemark login --server ${server} --token ${token ? token.token : "ID:SECRET"}`}
        label="Copy login command"
        testId="cli-login"
      />
    </section>
  );
}

/** The secret exists in the browser only until this box is dismissed; the server keeps just a hash. */
function NewTokenNotice({ token, onDismiss }: { token: CreatedTokenDto; onDismiss: () => void }) {
  return (
    <section aria-label="New token" className="mb-4 rounded-md border-2 border-harbour bg-harbour-soft p-4">
      <h2 className="text-lg">Token “{token.name}” created</h2>
      <p className="mt-1 text-sm">
        It works until {formatDate(token.expiresAt)}. Copy it now: it is shown only this once. Use it with <code className="font-mono">tidemark login</code> or as <code className="font-mono">TIDEMARK_TOKEN</code>.
      </p>
      <p className="mt-2 rounded border border-line-strong bg-surface px-2 py-1.5 font-mono text-sm break-all select-all" data-testid="new-token">
        {token.token}
      </p>
      <div className="mt-2 flex flex-wrap items-center gap-3">
        <CopyButton text={token.token} label="Copy token" />
        <button type="button" className={buttonClass.secondary} onClick={onDismiss}>
          I have saved it
        </button>
      </div>
    </section>
  );
}

/** Lifetimes offered at creation; the server takes 1–1825 days and defaults to a year. */
const LIFETIMES: [days: number, label: string][] = [
  [30, "30 days"],
  [90, "90 days"],
  [365, "1 year"],
  [730, "2 years"],
];

function CreateTokenForm({ onCreated }: { onCreated: (token: CreatedTokenDto) => void }) {
  const [name, setName] = useState("");
  const [days, setDays] = useState(365);
  const create = useCreateToken();
  function submit(event: FormEvent) {
    event.preventDefault();
    create.mutate({ name: name.trim(), expiresInDays: days }, { onSuccess: (token) => { setName(""); onCreated(token); } });
  }
  return (
    <form onSubmit={submit} aria-label="Create a token" className="mb-4 rounded-md border border-line bg-surface p-3">
      <div className="flex flex-wrap items-end gap-3">
        <TextField label="Token name" hint="(where it will be used)" placeholder="e.g. transfer-station-2" required maxLength={100} value={name} onChange={(e) => setName(e.target.value)} className="w-72" />
        <SelectField label="Expires after" value={String(days)} onChange={(e) => setDays(Number(e.target.value))} className="w-36">
          {LIFETIMES.map(([value, label]) => (
            <option key={value} value={value}>
              {label}
            </option>
          ))}
        </SelectField>
        <button type="submit" className={buttonClass.primary} disabled={create.isPending || !name.trim()}>
          {create.isPending ? "Creating…" : "Create token"}
        </button>
      </div>
      {create.isError && <InlineError message={`The token was not created: ${describeError(create.error)}`} />}
    </form>
  );
}

export function TokensPage() {
  const tokens = useMyTokens();
  const [created, setCreated] = useState<CreatedTokenDto | null>(null);
  return (
    <>
      <PageHeader title="API tokens">Tokens let the tidemark CLI upload batches in your name. Revoke one as soon as it is no longer needed.</PageHeader>
      {created && <NewTokenNotice token={created} onDismiss={() => setCreated(null)} />}
      <InstallCli token={created} />
      <CreateTokenForm onCreated={setCreated} />
      {tokens.isPending && <LoadingState label="Loading your tokens" />}
      {tokens.isError && <ErrorState title="Your tokens could not load" message={describeError(tokens.error)} onRetry={() => void tokens.refetch()} />}
      {tokens.data && tokens.data.length === 0 && <EmptyState title="No tokens yet">Create one above for each machine that uploads.</EmptyState>}
      {tokens.data && tokens.data.length > 0 && (
        <div className="overflow-x-auto rounded-md border border-line bg-surface">
          <table className="w-full min-w-[640px] text-sm">
            <TokenTableHead />
            <tbody>
              {tokens.data.map((token) => (
                <TokenRow key={token.id} token={token} />
              ))}
            </tbody>
          </table>
        </div>
      )}
    </>
  );
}
