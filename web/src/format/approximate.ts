/** Three significant figures: an estimate shown to the last digit would claim a precision it lacks. */
export function roughly(n: number): string {
  const unit = 10 ** Math.max(0, Math.floor(Math.log10(Math.max(1, n))) - 2);
  return (Math.round(n / unit) * unit).toLocaleString("en-GB");
}
