import type { Verdict } from '../../app/core/model/report.ts';
import { StatusBadge } from './StatusBadge.tsx';

export const VERDICT_WORDS: Record<Verdict, { status: 'pass' | 'warn' | 'fail'; words: string }> = {
  supported: { status: 'pass', words: 'Supported' },
  'supported-with-caveats': { status: 'warn', words: 'Supported with caveats' },
  'not-supported': { status: 'fail', words: 'Not supported' },
};

export function VerdictBadge({ verdict, compact = false }: { verdict: Verdict; compact?: boolean }) {
  const v = VERDICT_WORDS[verdict];
  return <span className={compact ? 'verdict compact' : 'verdict'} data-verdict={verdict}><StatusBadge status={v.status} label={v.words} /></span>;
}
