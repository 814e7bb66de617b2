/**
 * Spreadsheet formula injection: text cells starting with = + - @ tab or CR get a leading apostrophe
 * (OWASP "CSV Injection"). Only free-text columns pass through here; numbers stay numbers.
 */
export function safeText(value: string | null | undefined): string {
  if (value === null || value === undefined) return "";
  return /^[=+\-@\t\r]/.test(value) ? `'${value}` : value;
}
