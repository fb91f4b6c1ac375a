import { describe, expect, it } from 'vitest';
import { type DialogApi, PathGrants } from '../../../app/main/file-access.ts';
import { PDF_OPTIONS, printReportToPdf } from '../../../app/main/print.ts';

describe('printReportToPdf', () => {
  it('prints the window to the chosen path with backgrounds and the page CSS size', async () => {
    const dialog: DialogApi = {
      showOpenDialog: async () => ({ canceled: true, filePaths: [] }),
      showSaveDialog: async (options) => {
        expect(options.defaultPath).toBe('maple-row-audit.pdf');
        return { canceled: false, filePath: '/out/maple-row-audit.pdf' };
      },
    };
    const pdf = new TextEncoder().encode('%PDF-1.7');
    const options: unknown[] = [];
    const written: [string, unknown][] = [];
    const saved = await printReportToPdf({ printToPDF: async (o) => (options.push(o), pdf) }, dialog, { suggestedName: 'maple-row-audit' }, new PathGrants(), async (p, c) => {
      written.push([p, c]);
    });
    expect(saved).toBe('/out/maple-row-audit.pdf');
    expect(options).toEqual([PDF_OPTIONS]);
    expect(PDF_OPTIONS).toMatchObject({ printBackground: true, preferCSSPageSize: true });
    expect(written).toEqual([['/out/maple-row-audit.pdf', pdf]]);
  });
});
