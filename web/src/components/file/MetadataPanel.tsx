/**
 * The file's embedded metadata, readable: bext fields (EBU Tech 3285) with the version-2 loudness values,
 * CodingHistory as a table of its EBU R 98 rows, LIST/INFO entries by name, and the iXML text. Findings of
 * the profile's metadata rules are listed on top; they are in the findings table too.
 */
import type { FileDetailDto } from "@tidemark/shared/types/api";
import { parseCodingHistory } from "@tidemark/shared/metadata/codingHistory";
import type { BextMetadata } from "@tidemark/shared/types/report";

const METADATA_CODES = new Set(["metadata-missing", "metadata-recommended-missing", "metadata-format", "bext-version-mismatch", "coding-history-mismatch", "bext-loudness-mismatch"]);

/** RIFF INFO ids (Microsoft RIFF specification, 1991) the archive world uses most, in words. */
const INFO_NAMES: Record<string, string> = {
  IARL: "Archival location",
  IART: "Artist",
  ICMT: "Comment",
  ICOP: "Copyright",
  ICRD: "Creation date",
  IENG: "Engineer",
  IGNR: "Genre",
  IKEY: "Keywords",
  IMED: "Medium",
  INAM: "Title",
  IPRD: "Product",
  ISBJ: "Subject",
  ISFT: "Software",
  ISRC: "Source",
  ISRF: "Source form",
  ITCH: "Technician",
};

const dash = (s: string | null | undefined): string => (s && s.trim() !== "" ? s : "—");
const level = (v: number | null | undefined, unit: string): string => (v === null || v === undefined ? "not set" : `${v.toFixed(2)} ${unit}`);

function Field({ label, children }: { label: string; children: string }) {
  return (
    <div className="grid grid-cols-[11rem_minmax(0,1fr)] gap-2 border-b border-line py-1 last:border-b-0">
      <dt className="text-ink-muted">{label}</dt>
      <dd className="break-words">{children}</dd>
    </div>
  );
}

function BextFields({ bext }: { bext: BextMetadata }) {
  const l = bext.loudness;
  return (
    <dl className="text-sm" aria-label="bext fields">
      <Field label="Description">{dash(bext.description)}</Field>
      <Field label="Originator">{dash(bext.originator)}</Field>
      <Field label="Originator reference">{dash(bext.originatorReference)}</Field>
      <Field label="Origination date">{dash(bext.originationDate)}</Field>
      <Field label="Origination time">{dash(bext.originationTime)}</Field>
      <Field label="Time reference">{`${bext.timeReference} samples`}</Field>
      <Field label="Version">{String(bext.version)}</Field>
      <Field label="UMID">{bext.umid ? `${bext.umid.length / 2} bytes: ${bext.umid}` : "—"}</Field>
      {l && (
        <>
          <Field label="Loudness value">{level(l.loudnessValue, "LUFS")}</Field>
          <Field label="Loudness range">{level(l.loudnessRange, "LU")}</Field>
          <Field label="Max true-peak level">{level(l.maxTruePeakLevel, "dBTP")}</Field>
          <Field label="Max momentary loudness">{level(l.maxMomentaryLoudness, "LUFS")}</Field>
          <Field label="Max short-term loudness">{level(l.maxShortTermLoudness, "LUFS")}</Field>
        </>
      )}
    </dl>
  );
}

function CodingHistoryTable({ history }: { history: string }) {
  const rows = parseCodingHistory(history);
  if (rows.length === 0) return <p className="text-sm text-ink-muted">No coding history.</p>;
  const cell = "py-1 pr-2 align-top";
  return (
    <table className="w-full text-sm" aria-label="Coding history">
      <caption className="mb-1 text-left font-semibold">Coding history (one row per stage, last is this file)</caption>
      <thead>
        <tr className="border-b border-line text-left text-ink-muted">
          {["#", "Algorithm", "Sample rate", "Bit rate", "Word length", "Mode", "Text"].map((h) => (
            <th key={h} scope="col" className={`${cell} font-medium`}>
              {h}
            </th>
          ))}
        </tr>
      </thead>
      <tbody>
        {rows.map((r, i) => (
          <tr key={i} className="border-b border-line last:border-b-0" title={r.raw}>
            <td className={cell}>{i + 1}</td>
            <td className={cell}>{dash(r.algorithm)}</td>
            <td className={cell}>{r.sampleRateHz === null ? "—" : `${r.sampleRateHz} Hz`}</td>
            <td className={cell}>{r.bitRateKbps === null ? "—" : `${r.bitRateKbps} kbit/s`}</td>
            <td className={cell}>{r.wordLengthBits === null ? "—" : `${r.wordLengthBits} bit`}</td>
            <td className={cell}>{dash(r.mode)}</td>
            <td className={cell}>
              {dash(r.text)}
              {r.unknown.length > 0 && <span className="text-ink-muted"> (also: {r.unknown.join(", ")})</span>}
            </td>
          </tr>
        ))}
      </tbody>
    </table>
  );
}

export function MetadataPanel({ file }: { file: FileDetailDto }) {
  const { bext, info, ixml } = file.metadata;
  const infoEntries = Object.entries(info ?? {});
  const findings = file.findings.filter((f) => METADATA_CODES.has(f.code));
  const nothing = !bext && infoEntries.length === 0 && !ixml;
  return (
    <section aria-labelledby="metadata-heading" className="min-w-0 rounded-md border border-line bg-surface p-3 lg:col-start-1">
      <h2 id="metadata-heading" className="mb-2 text-lg">
        Embedded metadata
      </h2>
      {findings.length > 0 && (
        <ul className="mb-3 space-y-1 text-sm" aria-label="Metadata findings">
          {findings.map((f) => (
            <li key={f.id} className={f.severity === "fail" ? "font-semibold text-fail" : f.severity === "warn" ? "text-warn" : "text-ink-muted"}>
              {f.severity}: {f.message}
            </li>
          ))}
        </ul>
      )}
      {nothing && <p className="text-sm text-ink-muted">This file carries no bext, INFO or iXML metadata.</p>}
      {bext && (
        <div className="mb-3 space-y-3">
          <h3 className="text-base">Broadcast extension (bext)</h3>
          <BextFields bext={bext} />
          <CodingHistoryTable history={bext.codingHistory} />
        </div>
      )}
      {infoEntries.length > 0 && (
        <div className="mb-3">
          <h3 className="mb-1 text-base">RIFF INFO</h3>
          <dl className="text-sm" aria-label="INFO entries">
            {infoEntries.map(([id, text]) => (
              <Field key={id} label={INFO_NAMES[id] ? `${INFO_NAMES[id]} (${id})` : id}>
                {text}
              </Field>
            ))}
          </dl>
        </div>
      )}
      {ixml && (
        <details>
          <summary className="cursor-pointer text-base">iXML ({ixml.length} characters)</summary>
          <pre className="mt-1 max-h-80 overflow-auto rounded bg-sunken p-2 font-mono text-xs whitespace-pre-wrap">{ixml}</pre>
        </details>
      )}
    </section>
  );
}
