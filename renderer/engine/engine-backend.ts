import { runAuditDetailed, type AuditRequest } from '../../app/core/audit.ts';
import type { InputFile } from '../../app/core/model/report.ts';
import { suggestRoles } from '../../app/core/roles/roles.ts';
import { describeSql, parseDescribe, parseProfile, profileSql, type Profile } from '../../app/core/scan/profile.ts';
import type { RunQuery } from '../../app/core/table.ts';
import { EngineError, type Engine } from '../../app/engine/types.ts';
import type { AuditDraft } from '../state/draft.ts';
import type { AuditBackend, AuditOutcome, LogInput, Progress } from './backend.ts';
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

/** A host that found a picked file by name must have found that file, not another of the same name. */
export function sizeMismatch(picked: readonly File[], found: readonly InputFile[]): string | null {
  for (const file of picked) {
    const match = found.find((f) => (f.path.split(/[\\/]/).pop() ?? f.path) === file.name);
    if (!match) return `The local engine did not report opening ${file.name}.`;
    if (match.bytes !== file.size) {
      return `The local engine found a different ${file.name} (${match.path}, ${match.bytes.toLocaleString('en')} bytes; the picked file has ${file.size.toLocaleString('en')}). Type the picked file's full path instead.`;
    }
  }
  return null;
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
      const names = input.kind === 'paths' ? [...input.paths] : input.files.map((f) => f.name);
      const choice = chooseFormat(names);
      if ('error' in choice) throw new Error(choice.error);
      if (choice.format === 'parquet' && !options.readsParquet) throw new EngineError('unsupported-format', PARQUET_IN_BROWSER);
      const csv = choice.csv ? { csv: choice.csv } : {};
      const digests = input.kind === 'files' ? describe(input.files) : null;
      digests?.catch(() => undefined);
      const registered = input.kind === 'files'
        ? await engine.register({ kind: 'file', files: [...input.files], format: choice.format, ...csv })
        : await engine.register({ kind: 'path', paths: names, format: choice.format, ...csv });
      const fingerprints = digests ? null : await fingerprintPaths(run, registered.files);
      if (input.kind === 'named' && fingerprints) {
        const problem = sizeMismatch(input.files, fingerprints);
        if (problem) throw new Error(problem);
      }
      const profile = await profileOf(run, registered.relation);
      return {
        label: sourceLabel(names.map((n) => n.split(/[\\/]/).pop() ?? n)),
        relation: registered.relation,
        scanSql: registered.scanSql,
        format: registered.format,
        files: digests ? await digests : (fingerprints ?? []),
        profile,
        suggestions: suggestRoles(profile),
      };
    },

    async run(source: OpenedSource, draft: AuditDraft, onProgress: (p: Progress) => void, signal: AbortSignal): Promise<AuditOutcome> {
      const onAbort = () => { void engine.cancel(); };
      signal.addEventListener('abort', onAbort, { once: true });
      try {
        const request = auditRequest(source, draft, engine.kind);
        const { report, cells, profile } = await runAuditDetailed(run, { ...request, onProgress, signal });
        return { report, workspace: { cells, profile, targets: request.targets ?? [] } };
      } finally {
        signal.removeEventListener('abort', onAbort);
      }
    },

    close: () => engine.close(),
  };
}
