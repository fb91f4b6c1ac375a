import type { PrintToPDFOptions } from 'electron';
import type { PrintRequest } from './ipc-contract.ts';
import { chooseSavePath, type DialogApi, type PathGrants, type WriteFile } from './file-access.ts';
import { writeFile } from 'node:fs/promises';

/** The report view's print stylesheet decides the layout; the page size follows it. */
export const PDF_OPTIONS: PrintToPDFOptions = {
  printBackground: true,
  preferCSSPageSize: true,
  pageSize: 'A4',
  generateDocumentOutline: true,
  generateTaggedPDF: true,
};

export interface PrintableContents {
  printToPDF(options: PrintToPDFOptions): Promise<Uint8Array>;
}

/** Prints what the window shows (the report view) to a PDF at a path the user chooses. */
export async function printReportToPdf(
  contents: PrintableContents,
  dialog: DialogApi,
  request: PrintRequest,
  grants: PathGrants,
  write: WriteFile = (p, c) => writeFile(p, c),
): Promise<string | null> {
  const target = await chooseSavePath(dialog, 'pdf', request.suggestedName, grants);
  if (target === null) return null;
  const pdf = await contents.printToPDF(PDF_OPTIONS);
  await write(target, pdf);
  return target;
}
