import { useState, type FormEvent } from "react";
import { REVIEW_STATES, type FileQuery } from "@tidemark/shared/types/api";
import { CONTAINERS, FINDING_CODES, VERDICTS } from "@tidemark/shared/types/codes";
import { useCollections } from "../../api/batches.ts";
import { formatContainer } from "../../format/units.ts";
import { buttonClass, SelectField, TextField } from "../fields.tsx";

interface FileFiltersProps {
  query: FileQuery;
  onChange: (change: Partial<FileQuery>) => void;
  onClear: () => void;
}

function SearchForm({ initial, onSearch }: { initial: string; onSearch: (q: string | undefined) => void }) {
  const [text, setText] = useState(initial);
  function submit(event: FormEvent) {
    event.preventDefault();
    onSearch(text.trim() || undefined);
  }
  return (
    <form role="search" onSubmit={submit} className="flex items-end gap-2">
      <TextField label="Search paths" type="search" placeholder="e.g. reel-07" value={text} onChange={(e) => setText(e.target.value)} className="w-56" />
      <button type="submit" className={buttonClass.secondary}>
        Search
      </button>
    </form>
  );
}

function CollectionSelect({ value, onChange }: { value: number | undefined; onChange: (id: number | undefined) => void }) {
  const collections = useCollections();
  return (
    <SelectField
      label="Collection"
      value={value ?? ""}
      onChange={(e) => onChange(e.target.value ? Number(e.target.value) : undefined)}
      disabled={collections.isPending}
      className="w-56"
    >
      <option value="">{collections.isError ? "All (list could not load)" : "All collections"}</option>
      {collections.data?.map((c) => (
        <option key={c.id} value={c.id}>
          {c.name}
        </option>
      ))}
    </SelectField>
  );
}

export function FileFilters({ query, onChange, onClear }: FileFiltersProps) {
  return (
    <div className="mb-3 flex flex-wrap items-end gap-3 rounded-md border border-line bg-surface p-3">
      {/* Keyed by the committed text so "Clear filters" also empties the box. */}
      <SearchForm key={query.q ?? ""} initial={query.q ?? ""} onSearch={(q) => onChange({ q })} />
      <SelectField label="Verdict" value={query.verdict ?? ""} onChange={(e) => onChange({ verdict: (e.target.value || undefined) as FileQuery["verdict"] })} className="w-32">
        <option value="">Any</option>
        {VERDICTS.map((v) => (
          <option key={v} value={v}>
            {v}
          </option>
        ))}
      </SelectField>
      <SelectField
        label="Review state"
        value={query.reviewState ?? ""}
        onChange={(e) => onChange({ reviewState: (e.target.value || undefined) as FileQuery["reviewState"] })}
        className="w-36"
      >
        <option value="">Any</option>
        {REVIEW_STATES.map((s) => (
          <option key={s} value={s}>
            {s}
          </option>
        ))}
      </SelectField>
      <SelectField label="Finding" value={query.finding ?? ""} onChange={(e) => onChange({ finding: (e.target.value || undefined) as FileQuery["finding"] })} className="w-44">
        <option value="">Any</option>
        {FINDING_CODES.map((code) => (
          <option key={code} value={code}>
            {code}
          </option>
        ))}
      </SelectField>
      <SelectField label="Container" value={query.container ?? ""} onChange={(e) => onChange({ container: (e.target.value || undefined) as FileQuery["container"] })} className="w-28">
        <option value="">Any</option>
        {CONTAINERS.map((c) => (
          <option key={c} value={c}>
            {formatContainer(c)}
          </option>
        ))}
      </SelectField>
      <CollectionSelect value={query.collection} onChange={(collection) => onChange({ collection })} />
      <button type="button" onClick={onClear} className={`${buttonClass.secondary} ml-auto`}>
        Clear filters
      </button>
    </div>
  );
}
