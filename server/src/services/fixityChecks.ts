/**
 * Fixity checks sent by `tidemark verify --upload`: each file's outcome is stored against the collection
 * and path (the fixity history the auditor reads), and a changed file goes through the same handling as a
 * changed SHA-256 at ingest: a `fixity-changed` finding on the latest scan of that path (which then fails),
 * an audit entry, and an e-mail to the supervisors.
 */
import { QueryTypes, type Transaction } from "sequelize";
import { verdictAfterFixityChange } from "@tidemark/shared/fixity/fixityRule";
import type { FixityCheckUploadRequest, FixityCheckUploadResultDto } from "@tidemark/shared/types/api";
import type { AppContext } from "../context.ts";
import { HttpError } from "../errors.ts";
import { Collection, FixityCheck, User } from "../models/index.ts";
import { actingUser, type Actor } from "./actor.ts";
import { recordAudit } from "./audit.ts";
import { summariseFindings } from "./findingSummary.ts";

interface LatestScan {
  id: number;
  batch_id: number;
  path: string;
  sha256: string | null;
  verdict: "pass" | "warn" | "fail" | "error";
}

export interface ChangedFile {
  fileResultId: number;
  path: string;
  expectedSha256: string | null;
  actualSha256: string | null;
}

/** The `fixity-changed` finding, added to the latest scan, and that scan's verdict and list columns updated. */
async function markChanged(ctx: AppContext, scan: LatestScan, check: FixityCheckUploadRequest["checks"][number], checkedAt: string, transaction: Transaction): Promise<void> {
  const message = `SHA-256 checked by tidemark verify at ${checkedAt} is ${check.actualSha256 ?? "unknown"}; this scan recorded ${check.expectedSha256 ?? scan.sha256 ?? "none"}`;
  await ctx.sequelize.query(
    `insert into findings (file_result_id, code, severity, channel, start_seconds, end_seconds, message) values ($1, 'fixity-changed', 'fail', null, null, null, $2)`,
    { bind: [scan.id, message], type: QueryTypes.INSERT, transaction },
  );
  const findings = await ctx.sequelize.query<{ code: string; severity: "info" | "warn" | "fail" }>(`select code, severity from findings where file_result_id = $1`, {
    bind: [scan.id],
    type: QueryTypes.SELECT,
    transaction,
  });
  const verdict = verdictAfterFixityChange(scan.verdict);
  await ctx.sequelize.query(
    `update file_results set verdict = $4::verdict, worst_findings = $2::jsonb, finding_codes = $3::text[] where id = $1`,
    { bind: [scan.id, JSON.stringify(summariseFindings(findings as never)), [...new Set(findings.map((f) => f.code))], verdict], type: QueryTypes.UPDATE, transaction },
  );
  // The batch's counts follow the file's new verdict (the same rule as a changed SHA-256 at ingest).
  if (verdict !== scan.verdict) {
    const column = scan.verdict === "pass" ? "pass_count" : "warn_count";
    await ctx.sequelize.query(`update batches set ${column} = ${column} - 1, fail_count = fail_count + 1 where id = $1`, {
      bind: [scan.batch_id],
      type: QueryTypes.UPDATE,
      transaction,
    });
  }
}

export async function recordFixityChecks(ctx: AppContext, actor: Actor, input: FixityCheckUploadRequest): Promise<{ result: FixityCheckUploadResultDto; changed: ChangedFile[]; collection: Collection }> {
  const user = actingUser(actor);
  const collection = await Collection.findOne({ where: { name: input.collection } });
  if (!collection) throw new HttpError(404, "not_found", `no collection named "${input.collection}": checks are stored against the collection the files were scanned into`);
  const changed: ChangedFile[] = [];
  let unknownPaths = 0;
  await ctx.sequelize.transaction(async (transaction) => {
    const paths = [...new Set(input.checks.map((c) => c.path))];
    const latest = await ctx.sequelize.query<LatestScan>(
      `select distinct on (path) id, batch_id, path, sha256, verdict from file_results
        where collection_id = $1 and path = any($2::text[]) order by path, id desc`,
      { bind: [collection.id, paths], type: QueryTypes.SELECT, transaction },
    );
    const byPath = new Map(latest.map((r) => [r.path, r]));
    for (const check of input.checks) {
      const scan = byPath.get(check.path) ?? null;
      if (!scan) unknownPaths += 1;
      await FixityCheck.create(
        {
          collectionId: collection.id,
          path: check.path,
          fileResultId: scan?.id ?? null,
          outcome: check.outcome,
          expectedSha256: check.expectedSha256,
          actualSha256: check.actualSha256,
          movedTo: check.movedTo,
          detail: check.detail,
          checkedAt: new Date(input.checkedAt),
          userId: user.id,
          tokenId: actor.tokenId,
        },
        { transaction },
      );
      if (check.outcome === "changed" && scan) {
        await markChanged(ctx, scan, check, input.checkedAt, transaction);
        changed.push({ fileResultId: scan.id, path: check.path, expectedSha256: check.expectedSha256, actualSha256: check.actualSha256 });
        await recordAudit(
          actor,
          {
            action: "file.fixity_changed",
            targetType: "file",
            targetId: scan.id,
            details: { path: check.path, via: "verify", previousSha256: check.expectedSha256, sha256: check.actualSha256 },
          },
          transaction,
        );
      }
    }
    const counts = Object.fromEntries(["unchanged", "changed", "missing", "unreadable", "moved"].map((o) => [o, input.checks.filter((c) => c.outcome === o).length]));
    await recordAudit(actor, { action: "fixity.check", targetType: "collection", targetId: collection.id, details: { files: input.checks.length, ...counts, unknownPaths } }, transaction);
  });
  return { result: { stored: input.checks.length, unknownPaths, changed: changed.length }, changed, collection };
}

/** E-mail to supervisors: files whose SHA-256 changed since they were scanned. */
export async function notifyFixityChanged(ctx: AppContext, collection: Collection, changed: readonly ChangedFile[]): Promise<void> {
  if (changed.length === 0) return;
  const supervisors = await User.findAll({ where: { role: "supervisor", disabled: false }, order: [["id", "ASC"]] });
  if (supervisors.length === 0) return;
  const base = ctx.settings.publicUrl;
  // Paths come from the client: keep them to one line each.
  // eslint-disable-next-line no-control-regex
  const oneLine = (text: string): string => text.replace(/[\u0000-\u001f\u007f-\u009f\u2028\u2029]/g, " ");
  ctx.mailer.send({
    to: supervisors.map((s) => s.email),
    subject: `Tidemark: ${changed.length} file${changed.length === 1 ? "" : "s"} changed since scanned, in ${oneLine(collection.name)}`,
    text: [
      `A fixity check (tidemark verify) found ${changed.length} file${changed.length === 1 ? "" : "s"} of "${oneLine(collection.name)}" whose SHA-256 is not the one recorded when it was scanned:`,
      "",
      ...changed.slice(0, 50).map((c) => `  - ${oneLine(c.path)}\n    ${base}/files/${c.fileResultId}`),
      ...(changed.length > 50 ? [`  … and ${changed.length - 50} more`] : []),
    ].join("\n"),
  });
}
