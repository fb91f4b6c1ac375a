/**
 * Expected outcome of every corpus log (files made by make-corpus.ts): either a specific error (its code
 * and the words that say what is wrong, where, and what to do) or an audit with the right finding.
 * `wasm` says how DuckDB-Wasm (Node build, offline) must answer when it differs from native.
 */
import type { RoleOverrides } from '../../app/core/roles/roles.ts';

export interface ErrorOutcome {
  readonly error: { readonly code?: string; readonly name?: string; readonly words: readonly RegExp[] };
}

export interface AuditOutcome {
  readonly audit: {
    readonly rows?: number;
    readonly verdict?: string;
    /** check id -> expected status */
    readonly checks?: Readonly<Record<string, string>>;
    /** check id -> words in its summary or one of its findings' messages */
    readonly words?: Readonly<Record<string, readonly RegExp[]>>;
    readonly roles?: Readonly<Record<string, unknown>>;
    /** roles.reasons entries, role -> words */
    readonly reasons?: Readonly<Record<string, RegExp>>;
    readonly maxTargets?: number;
  };
}

export type Outcome = ErrorOutcome | AuditOutcome;

export interface CorpusCase {
  readonly id: string;
  /** file or folder under test/corpus/files */
  readonly file: string;
  readonly what: string;
  readonly roles?: RoleOverrides;
  readonly expect: Outcome;
  /** 'extension-unavailable': Wasm cannot read the format offline and must say so at once. */
  readonly wasm?: 'same' | 'extension-unavailable' | Outcome;
}

export const WASM_EXTENSION_UNAVAILABLE: ErrorOutcome = { error: { code: 'extension-unavailable', words: [/DuckDB-Wasm/, /desktop app/, /counterweight audit/] } };

export const CASES: readonly CorpusCase[] = [
  { id: 'empty', file: 'empty.csv', what: 'a 0-byte file', expect: { error: { name: 'EmptyLogError', words: [/no rows|empty/, /nothing to audit/] } } },
  { id: 'header-only', file: 'header-only.csv', what: 'a CSV with its header and no rows', expect: { error: { name: 'EmptyLogError', words: [/no rows/, /only a header/, /"propensity"/] } } },
  { id: 'single-row', file: 'single-row.csv', what: 'one decision', roles: { action: 'promotion' }, expect: { audit: { rows: 1, verdict: 'not-supported', checks: { 'weights.ess': 'fail' }, words: { 'schema.roles': [/at least two actions/] } } } },
  { id: 'single-row-unmapped', file: 'single-row.csv', what: 'one decision, roles left to suggestion', expect: { audit: { rows: 1, checks: { 'schema.roles': 'fail' }, words: { 'schema.roles': [/'promotion'/, /single value/] } } } },
  { id: 'ragged', file: 'ragged-rows.csv', what: 'rows with 8 and 3 fields under a 6-field header', expect: { error: { code: 'io', words: [/ragged-rows\.csv/, /line 18 has 8/, /line 34 has 3/, /header has 6/, /Fix or remove/] } } },
  { id: 'unterminated-quote', file: 'unterminated-quote.csv', what: 'the last row opens a quote it never closes', expect: { audit: { rows: 41, checks: { 'schema.roles': 'pass' } } } },
  { id: 'latin1', file: 'latin1.csv', what: 'Latin-1 bytes (0xE9) in a CSV', expect: { error: { code: 'io', words: [/latin1\.csv/, /not UTF-8/, /line 2/, /iconv/] } } },
  { id: 'bom', file: 'bom-utf8.csv', what: 'a UTF-8 byte-order mark before the header', expect: { audit: { rows: 50, roles: { decision_id: 'decision_id', time: 'logged_at' } } } },
  { id: 'nul', file: 'nul-bytes.csv', what: 'a NUL byte inside a segment value', expect: { audit: { rows: 50, checks: { 'schema.roles': 'pass' } } } },
  { id: 'decimal-comma-semicolon', file: 'propensity-decimal-comma.csv', what: "';'-separated export with decimal commas", expect: { audit: { checks: { 'schema.roles': 'fail', 'propensity.range': 'skipped' }, words: { 'schema.roles': [/'propensity'/, /decimal comma/, /decimal point/] } } } },
  { id: 'decimal-comma-quoted', file: 'propensity-text-comma.csv', what: 'propensity as quoted text "0,1428571"', expect: { audit: { checks: { 'schema.roles': 'fail' }, words: { 'schema.roles': [/decimal comma/] } } } },
  // Planted by make-corpus.ts: 10 each of NaN, inf, -inf, -0.2, 1.5, 0 among 400 rows.
  { id: 'propensity-invalid', file: 'propensity-invalid.csv', what: 'propensities NaN, ±Inf, negative, > 1, exactly 0', expect: { audit: { rows: 400, verdict: 'not-supported', checks: { 'propensity.range': 'fail' }, words: { 'propensity.range': [/60 rows/, /NaN 10/, /<= 0 30/, /> 1 20/] } } } },
  { id: 'propensity-one', file: 'propensity-all-one.csv', what: 'every propensity is 1, one action', roles: { action: 'promotion' }, expect: { audit: { verdict: 'not-supported', checks: { 'propensity.exploration': 'fail' }, words: { 'propensity.exploration': [/every propensity is 1/] } } } },
  { id: 'rewards-null', file: 'rewards-all-null.csv', what: 'the reward column is empty on every row', expect: { audit: { checks: { 'schema.roles': 'fail' }, words: { 'schema.roles': [/no reward column/, /'ordered'/, /every value is empty/] } } } },
  { id: 'rewards-null-mapped', file: 'rewards-all-null.csv', what: 'the same, reward mapped explicitly', roles: { reward: 'ordered' }, expect: { audit: { verdict: 'not-supported', checks: { 'reward.validity': 'fail' }, words: { 'reward.validity': [/100\.0+%/] } } } },
  { id: 'time-mixed', file: 'time-mixed-formats.csv', what: 'ISO, US-style and epoch times in one column', roles: { time: 'logged_at' }, expect: { audit: { checks: { 'schema.roles': 'warn', 'time.coverage': 'skipped' }, words: { 'schema.roles': [/'logged_at' mixes formats/, /33\.3%/] } } } },
  { id: 'epoch-s', file: 'epoch-seconds.csv', what: 'time as Unix seconds', expect: { audit: { roles: { time: 'logged_at' }, reasons: { time: /Unix seconds/ }, words: { 'time.coverage': [/^2026-03-02 00:00 to .* UTC/] } } } },
  { id: 'epoch-ms', file: 'epoch-millis.csv', what: 'time as Unix milliseconds', expect: { audit: { roles: { time: 'logged_at' }, reasons: { time: /Unix milliseconds/ }, words: { 'time.coverage': [/^2026-03-02 00:00 to .* UTC/] } } } },
  { id: 'actions-10k', file: 'actions-10k.csv', what: '10^4 distinct actions', roles: { action: 'promotion' }, expect: { audit: { rows: 20_000, checks: { 'schema.roles': 'pass', 'support.floor': 'warn' }, maxTargets: 51 } } },
  { id: 'actions-10k-unmapped', file: 'actions-10k.csv', what: '10^4 distinct actions, roles left to suggestion', expect: { audit: { checks: { 'schema.roles': 'fail' }, words: { 'schema.roles': [/'promotion'/, /distinct values/, /map it explicitly/] } } } },
  { id: 'duplicate-columns', file: 'duplicate-columns.csv', what: 'two columns named promotion', expect: { audit: { rows: 100, roles: { action: 'promotion' }, checks: { 'schema.roles': 'pass' } } } },
  {
    id: 'hostile-names', file: 'hostile-column-names.csv', what: 'column names with quotes, ;, SQL keywords, newlines, emoji, HTML, and columns named p and w',
    roles: { propensity: 'propensity', decision_id: 'id"; DROP TABLE src_1; --', segments: ['seg;ment', 'select', 'multi\nline', 'promo 🍞', '<img src=x onerror=alert(1)>'] },
    expect: { audit: { rows: 120, checks: { 'schema.roles': 'pass', 'identity.duplicates': 'pass', 'propensity.range': 'pass' }, roles: { decision_id: 'id"; DROP TABLE src_1; --' } } },
  },
  { id: 'hostile-values', file: 'hostile-values.csv', what: 'segment values <script>, "; DROP TABLE and friends', expect: { audit: { rows: 400, verdict: 'not-supported', checks: { 'propensity.exploration': 'fail' }, words: { 'propensity.exploration': [/<script>window\.__cw_pwned = 1<\/script>/] } } } },
  { id: 'gzip-cut', file: 'truncated.csv.gz', what: 'a gzip CSV cut at 60% of its bytes', expect: { error: { code: 'io', words: [/truncated\.csv\.gz/, /line 1790 has 1/, /cut short/] } } },
  { id: 'not-gzip', file: 'not-gzip.csv.gz', what: 'plain CSV named .csv.gz', expect: { error: { code: 'io', words: [/not a GZIP stream/, /not compressed/] } } },
  { id: 'png-as-csv', file: 'png-named.csv', what: 'a PNG image named .csv', expect: { error: { code: 'io', words: [/png-named\.csv/, /does not read as CSV/, /PNG image/] } } },
  { id: 'csv-as-parquet', file: 'csv-named.parquet', what: 'CSV text named .parquet', expect: { error: { code: 'io', words: [/csv-named\.parquet/, /not a complete Parquet file/, /plain text/, /rename it to \.csv/] } } },
  { id: 'parquet-cut', file: 'truncated.parquet', what: 'a Parquet file cut in half', expect: { error: { code: 'io', words: [/truncated\.parquet/, /not a complete Parquet file/, /cut short/] } } },
  { id: 'parquet-magic-only', file: 'parquet-header-only.parquet', what: 'only the 4 magic bytes of a Parquet file', expect: { error: { code: 'io', words: [/not a complete Parquet file/] } } },
  { id: 'unknown-extension', file: 'log.txt', what: 'a log named .txt', expect: { error: { code: 'unsupported-format', words: [/Cannot tell the format/, /log\.txt/, /\.csv/] } } },
  { id: 'parquet', file: 'good.parquet', what: 'a sound Parquet log', expect: { audit: { rows: 400, checks: { 'schema.roles': 'pass', 'propensity.range': 'pass' } } } },
  { id: 'ndjson', file: 'good.ndjson', what: 'a sound NDJSON log (Wasm must refuse it plainly)', expect: { audit: { rows: 30, checks: { 'schema.roles': 'pass' } } }, wasm: 'extension-unavailable' },
  { id: 'ndjson-broken', file: 'broken.ndjson', what: 'NDJSON with an unterminated string', expect: { error: { code: 'io', words: [/broken\.ndjson/, /Malformed JSON/, /byte 41/] } }, wasm: 'extension-unavailable' },
  { id: 'mixed-schema', file: 'mixed-schema', what: 'a folder of Parquet parts with different columns', expect: { error: { code: 'io', words: [/do not share one schema/, /"logged_at"/, /part-2\.parquet/, /same columns together/] } } },
];

/** Generated at test time (76 MB; not committed): 10^6 rows, each with its own segment value. */
export const HIGH_CARDINALITY = { roles: { segments: ['shopper'] }, cap: 50 } as const;
