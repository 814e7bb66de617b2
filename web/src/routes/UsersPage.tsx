import { useState, type FormEvent } from "react";
import { ROLES, type Role, type UserDto } from "@tidemark/shared/types/api";
import { describeError } from "../api/client.ts";
import { useAllTokens } from "../api/tokens.ts";
import { useCreateUser, useUpdateUser, useUsers } from "../api/users.ts";
import { TokenRow, TokenTableHead } from "../components/TokenRow.tsx";
import { useCurrentUser } from "../auth/currentUser.ts";
import { PageHeader } from "../components/PageHeader.tsx";
import { buttonClass, SelectField, TextField } from "../components/fields.tsx";
import { EmptyState, ErrorState, InlineError, LoadingState } from "../components/states.tsx";
import { formatDate } from "../format/units.ts";

// The server's policy (it re-checks); saying it up front saves a round trip.
const MIN_PASSWORD_LENGTH = 12;

function NewUserForm() {
  const [email, setEmail] = useState("");
  const [name, setName] = useState("");
  const [role, setRole] = useState<Role>("technician");
  const [password, setPassword] = useState("");
  const [done, setDone] = useState<string | null>(null);
  const create = useCreateUser();
  const tooShort = password.length > 0 && password.length < MIN_PASSWORD_LENGTH;

  function submit(event: FormEvent) {
    event.preventDefault();
    setDone(null);
    create.mutate(
      { email: email.trim(), name: name.trim(), role, password },
      {
        onSuccess: (user) => {
          setDone(`${user.email} can now sign in as ${user.role}.`);
          setEmail("");
          setName("");
          setPassword("");
        },
      },
    );
  }

  return (
    <form onSubmit={submit} aria-label="Add a user" className="mb-4 rounded-md border border-line bg-surface p-3">
      <h2 className="mb-2 text-lg">Add a user</h2>
      <div className="flex flex-wrap items-end gap-3">
        <TextField label="E-mail" type="email" required value={email} onChange={(e) => setEmail(e.target.value)} className="w-64" />
        <TextField label="Name" required value={name} onChange={(e) => setName(e.target.value)} className="w-48" />
        <SelectField label="Role" value={role} onChange={(e) => setRole(e.target.value as Role)} className="w-40">
          {ROLES.map((r) => (
            <option key={r} value={r}>
              {r}
            </option>
          ))}
        </SelectField>
        <TextField label="First password" hint={`(≥ ${MIN_PASSWORD_LENGTH})`} type="password" autoComplete="new-password" required value={password} onChange={(e) => setPassword(e.target.value)} className="w-48" />
        <button type="submit" className={buttonClass.primary} disabled={create.isPending || !email.trim() || !name.trim() || password.length < MIN_PASSWORD_LENGTH}>
          {create.isPending ? "Adding…" : "Add user"}
        </button>
      </div>
      {tooShort && <p className="mt-2 text-sm text-ink-muted">The password needs at least {MIN_PASSWORD_LENGTH} characters.</p>}
      {create.isError && <InlineError message={`The user was not added: ${describeError(create.error)}`} />}
      {done && (
        <p role="status" className="mt-2 text-sm text-pass">
          {done}
        </p>
      )}
    </form>
  );
}

function UserRow({ user, isSelf }: { user: UserDto; isSelf: boolean }) {
  const update = useUpdateUser();
  return (
    <tr className="border-b border-line last:border-b-0">
      <td className="px-2 py-1.5">
        <span className="font-medium">{user.name}</span>
        {isSelf && <span className="ml-1 text-xs text-ink-muted">(you)</span>}
        <span className="block text-xs text-ink-muted">{user.email}</span>
      </td>
      <td className="px-2 py-1.5">
        <label className="sr-only" htmlFor={`role-${user.id}`}>
          Role of {user.email}
        </label>
        <select
          id={`role-${user.id}`}
          value={user.role}
          disabled={isSelf || update.isPending}
          onChange={(e) => update.mutate({ id: user.id, change: { role: e.target.value as Role } })}
          className="rounded border border-line-strong bg-surface px-1.5 py-1"
        >
          {ROLES.map((r) => (
            <option key={r} value={r}>
              {r}
            </option>
          ))}
        </select>
      </td>
      <td className="px-2 py-1.5">{formatDate(user.createdAt)}</td>
      <td className="px-2 py-1.5">
        {user.disabled ? <span className="font-medium text-fail">disabled</span> : <span className="text-pass">active</span>}
      </td>
      <td className="px-2 py-1.5">
        {!isSelf && (
          <button type="button" className={user.disabled ? buttonClass.secondary : buttonClass.danger} disabled={update.isPending} onClick={() => update.mutate({ id: user.id, change: { disabled: !user.disabled } })}>
            {user.disabled ? "Enable" : "Disable"}
          </button>
        )}
        {update.isError && <InlineError message={`Not changed: ${describeError(update.error)}`} />}
      </td>
    </tr>
  );
}

export function UsersPage() {
  const users = useUsers();
  const me = useCurrentUser();
  return (
    <>
      <PageHeader title="Users">Who may sign in, and with which role. Disabling keeps a user's history but stops sign-in and their tokens.</PageHeader>
      <NewUserForm />
      {users.isPending && <LoadingState label="Loading users" />}
      {users.isError && <ErrorState title="The user list could not load" message={describeError(users.error)} onRetry={() => void users.refetch()} />}
      {users.data && users.data.length === 0 && <EmptyState title="No users" />}
      {users.data && users.data.length > 0 && (
        <div className="overflow-x-auto rounded-md border border-line bg-surface">
          <table className="w-full min-w-[640px] text-sm">
            <thead className="border-b border-line bg-sunken">
              <tr>
                {["User", "Role", "Since", "Status", "Actions"].map((h) => (
                  <th key={h} scope="col" className="px-2 py-2 text-left font-semibold">
                    {h}
                  </th>
                ))}
              </tr>
            </thead>
            <tbody>
              {users.data.map((user) => (
                <UserRow key={user.id} user={user} isSelf={user.id === me.id} />
              ))}
            </tbody>
          </table>
        </div>
      )}
      <AllTokens />
    </>
  );
}

/** Admins may revoke anyone's token (a leaked one, or a leaver's). */
function AllTokens() {
  const tokens = useAllTokens();
  return (
    <section aria-labelledby="all-tokens-heading" className="mt-6">
      <h2 id="all-tokens-heading" className="mb-2 text-lg">
        Everyone's API tokens
      </h2>
      {tokens.isPending && <LoadingState label="Loading tokens" />}
      {tokens.isError && <ErrorState title="The token list could not load" message={describeError(tokens.error)} onRetry={() => void tokens.refetch()} />}
      {tokens.data && tokens.data.length === 0 && <EmptyState title="Nobody holds an API token" />}
      {tokens.data && tokens.data.length > 0 && (
        <div className="overflow-x-auto rounded-md border border-line bg-surface">
          <table className="w-full min-w-[720px] text-sm">
            <TokenTableHead showOwner />
            <tbody>
              {tokens.data.map((token) => (
                <TokenRow key={token.id} token={token} showOwner />
              ))}
            </tbody>
          </table>
        </div>
      )}
    </section>
  );
}
