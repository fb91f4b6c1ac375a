import { runAudit, type AuditRequest } from '../../app/core/audit.ts';
import type { Report, InputFile } from '../../app/core/model/report.ts';
import { suggestRoles } from '../../app/core/roles/roles.ts';
import { describeSql, parseDescribe, parseProfile, profileSql, type Profile } from '../../app/core/scan/profile.ts';
import type { RunQuery } from '../../app/core/table.ts';
import { EngineError, type Engine } from '../../app/engine/types.ts';
import type { AuditDraft } from '../state/draft.ts';
import type { AuditBackend, LogInput, Progress } from './backend.ts';
import { describeFiles } from './digest.ts';
import { fingerprintPaths } from './host-fingerprint.ts';
import { chooseFormat, PARQUET_IN_BROWSER } from './source-files.ts';
import type { OpenedSource } from './status.ts';

export interface EngineBackendOptions {
  readonly readsParquet: boolean;
  /** Hashes the files for the report; the browser default hashes them in a worker. */
  readonly describe?: (files: readonly File[]) => Promise<InputFile[]>;
}

async function profileOf(run: RunQuery, relation: string): Promise<Profile> {
  const columns = parseDescribe(await run(describeSql(relation)));
  return parseProfile(await run(profileSql(relation, columns)), columns);
}

export function auditRequest(source: OpenedSource, draft: AuditDraft, engine: string): AuditRequest {
  return {
    relation: source.relation,
    scanSql: source.scanSql,
    input: { files: [...source.files], format: source.format },
    roles: { ...draft.roles, segments: [...draft.segments] },
    targets: draft.targets.map((t) => (t.tableText === undefined ? { spec: t.spec } : { spec: t.spec, tableText: t.tableText })),
    settings: { ...draft.settings },
    engine,
  };
}

export function sourceLabel(names: readonly string[]): string {
  return names.length === 1 ? (names[0] ?? '') : `${names[0]} and ${names.length - 1} more`;
}

/** An audit backend over any Engine whose queries run off the page's thread (worker or host). */
export function createEngineBackend(engine: Engine, options: EngineBackendOptions): AuditBackend {
  const run: RunQuery = (sql) => engine.query(sql);
  const describe = options.describe ?? describeFiles;
  return {
    engineKind: engine.kind,

    async open(input: LogInput): Promise<OpenedSource> {
      const names = input.kind === 'files' ? input.files.map((f) => f.name) : [...input.paths];
      const choice = chooseFormat(names);
      if ('error' in choice) throw new Error(choice.error);
      if (choice.format === 'parquet' && !options.readsParquet) throw new EngineError('unsupported-format', PARQUET_IN_BROWSER);
      const csv = choice.csv ? { csv: choice.csv } : {};
      const digests = input.kind === 'files' ? describe(input.files) : null;
      digests?.catch(() => undefined);
      const registered = input.kind === 'files'
        ? await engine.register({ kind: 'file', files: [...input.files], format: choice.format, ...csv })
        : await engine.register({ kind: 'path', paths: [...input.paths], format: choice.format, ...csv });
      const profile = await profileOf(run, registered.relation);
      return {
        label: sourceLabel(names.map((n) => n.split(/[\\/]/).pop() ?? n)),
        relation: registered.relation,
        scanSql: registered.scanSql,
        format: registered.format,
        files: digests ? await digests : await fingerprintPaths(run, registered.files),
        profile,
        suggestions: suggestRoles(profile),
      };
    },

    async run(source: OpenedSource, draft: AuditDraft, onProgress: (p: Progress) => void, signal: AbortSignal): Promise<Report> {
      const onAbort = () => { void engine.cancel(); };
      signal.addEventListener('abort', onAbort, { once: true });
      try {
        return await runAudit(run, { ...auditRequest(source, draft, engine.kind), onProgress, signal });
      } finally {
        signal.removeEventListener('abort', onAbort);
      }
    },

    close: () => engine.close(),
  };
}
