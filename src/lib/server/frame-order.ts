/**
 * The one order of a shoot's frames everywhere (desk, gallery, picks, finals, download numbers):
 * capture time, then file name with its digits compared as numbers (IMG_9 before IMG_10, for
 * frames without a capture time), then id so that equal names still sort the same way each time.
 * The collation is made by a migration from PostgreSQL's ICU support.
 */
export function captureOrder(alias?: string): string {
  const c = alias ? `${alias}.` : '';
  return `${c}taken_at ASC NULLS LAST, ${c}original_name COLLATE fillcard_natural ASC, ${c}id ASC`;
}
