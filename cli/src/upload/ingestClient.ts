/**
 * Sends one batch to the server: `POST {server}/api/ingest`, multipart/form-data with the text fields
 * `collection` and `batchKey`, the JSON report as file part `report`, and the files it points at
 * (reportImages.ts names them: `spectrogram` / `waveform` `<n>.png`, and per CONTRACT-16 `levelGrid` /
 * `loudnessCurve` `<n>.json`, `closeupSpectrogram` / `closeupWaveform` `<n>.<k>.png`, `excerpt` `<n>.<k>.wav`),
 * through the CLI's one API client (api/apiClient.ts: retries network errors and 5xx, never a 4xx).
 */
import type { IngestResultDto } from "@tidemark/shared/types/api";
import { ApiError, createApiClient, type OnRetry, type RetryPolicy } from "../api/apiClient.ts";

export type { PartField } from "@tidemark/shared/contracts/uploadParts";
import type { PartField } from "@tidemark/shared/contracts/uploadParts";

/** One file sent beside the report (named for ingest by reportImages.ts). */
export interface ImagePart {
  field: PartField;
  fileIndex: number;
  bytes: Uint8Array;
  /** The part's file name, e.g. `3.png`, `3.0.wav`; `<fileIndex>.png` when absent. */
  name?: string;
  /** `image/png` when absent. */
  mediaType?: string;
}

export interface IngestBatch {
  reportJson: string;
  collection: string;
  batchKey: string;
  images: ImagePart[];
}

function formFor(batch: IngestBatch): FormData {
  const form = new FormData();
  // Text fields first, so a streaming server knows the collection before the files arrive.
  form.append("collection", batch.collection);
  form.append("batchKey", batch.batchKey);
  form.append("report", new Blob([batch.reportJson], { type: "application/json" }), "report.json");
  for (const image of batch.images) {
    form.append(image.field, new Blob([image.bytes], { type: image.mediaType ?? "image/png" }), image.name ?? `${image.fileIndex}.png`);
  }
  return form;
}

export async function postBatch(server: string, token: string, batch: IngestBatch, policy: RetryPolicy, onRetry?: OnRetry): Promise<IngestResultDto> {
  const api = createApiClient(server, token, policy, onRetry);
  const { status, body } = await api.postForm<IngestResultDto | null>("/api/ingest", () => formFor(batch));
  if (!body || typeof body.batchId !== "number") {
    throw new ApiError(status, "bad-answer", `the server answered ${status} without a batch id`, `${api.server}/api/ingest`);
  }
  return body;
}
