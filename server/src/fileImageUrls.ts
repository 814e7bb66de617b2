/**
 * The URLs of a stored file's images and its close-ups' images: routes/files.ts serves them, the DTOs
 * (dto.ts) and the files CSV export link to them. The image names are stated here only.
 */
export const IMAGE_NAMES = { spectrogram: "spectrogram.png", waveform: "waveform.png" } as const;
export type ImageName = keyof typeof IMAGE_NAMES;

export function fileImageUrl(fileId: number, kind: ImageName): string {
  return `/api/files/${fileId}/${IMAGE_NAMES[kind]}`;
}

export function closeupImageUrl(fileId: number, closeupIndex: number, kind: ImageName): string {
  return `/api/files/${fileId}/closeups/${closeupIndex}/${IMAGE_NAMES[kind]}`;
}
