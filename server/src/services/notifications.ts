/**
 * E-mail to supervisors when an ingested batch has failing (or unreadable) files. Paths, names and keys
 * come from uploads, so each goes through mailLine (control characters removed). The subject names the
 * collection and the batch number; the batch key (up to 200 characters) is only in the body.
 */
import { Op } from "sequelize";
import type { AppContext } from "../context.ts";
import { mailLine } from "../mail/template.ts";
import { Batch, Collection, FileResult, User } from "../models/index.ts";

const LISTED_FILES = 50;

export async function notifyFailingBatch(ctx: AppContext, batchId: number): Promise<void> {
  const batch = await Batch.findByPk(batchId, {
    include: [
      { model: Collection, as: "collection" },
      { model: User, as: "uploader" },
    ],
  });
  if (!batch?.collection) return;
  const supervisors = await User.findAll({ where: { role: "supervisor", disabled: false }, order: [["id", "ASC"]] });
  if (supervisors.length === 0) return;
  const failing = await FileResult.findAll({
    where: { batchId, verdict: { [Op.in]: ["fail", "error"] } },
    attributes: ["id", "path", "verdict", "worstFindings"],
    order: [["path", "ASC"]],
    limit: LISTED_FILES,
  });
  const count = batch.failCount + batch.errorCount;
  const base = ctx.settings.publicUrl;
  const lines = failing.map((f) => {
    const codes = f.worstFindings.filter((w) => w.severity === "fail").map((w) => w.code);
    return [mailLine`  - ${f.path} (${f.verdict}${codes.length ? `: ${codes.join(", ")}` : ""})`, mailLine`    ${base}/files/${f.id}`].join("\n");
  });
  const more = count > failing.length ? [`  … and ${count - failing.length} more`] : [];
  ctx.mailer.send({
    to: supervisors.map((s) => s.email),
    subject: mailLine`Tidemark: ${count} failing file${count === 1 ? "" : "s"} in ${batch.collection.name}, batch ${batch.id}`,
    text: [
      mailLine`Batch ${batch.id} of "${batch.collection.name}" (batch key "${batch.batchKey}") was uploaded by ${batch.uploader?.name ?? "someone"} (profile ${batch.profileName}).`,
      `${count} of ${batch.fileCount} files failed or could not be read (fail ${batch.failCount}, error ${batch.errorCount}):`,
      "",
      ...lines,
      ...more,
      "",
      `Review the batch: ${base}/files?batch=${batch.id}`,
    ].join("\n"),
  });
}
