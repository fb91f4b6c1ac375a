import type { RoleSuggestion } from '../../app/core/roles/roles.ts';
import { EMPTY_DRAFT, SINGLE_ROLES, type AuditDraft, type SingleRole } from './draft.ts';

const isSegmentRole = (role: string) => role === 'segments' || role === 'segment';

/** The starting draft: the engine's best suggestion for each role, which the user then edits. */
export function draftFromSuggestions(suggestions: readonly RoleSuggestion[]): AuditDraft {
  const roles: Partial<Record<SingleRole, string>> = {};
  for (const role of SINGLE_ROLES) {
    const best = suggestions.filter((s) => s.role === role).sort((a, b) => b.confidence - a.confidence)[0];
    if (best) roles[role] = best.column;
  }
  const segments = [...new Set(suggestions.filter((s) => isSegmentRole(s.role)).map((s) => s.column))];
  return { ...EMPTY_DRAFT, roles, segments };
}

function suggestionFor(suggestions: readonly RoleSuggestion[], role: string, column: string | undefined): RoleSuggestion | undefined {
  if (!column) return undefined;
  return suggestions.find((s) => (s.role === role || (role === 'segments' && isSegmentRole(s.role))) && s.column === column);
}

export function reasonFor(suggestions: readonly RoleSuggestion[], role: string, column: string | undefined): string | null {
  return suggestionFor(suggestions, role, column)?.reason ?? null;
}

/** The reason as the Columns screen shows it: plain words first, the formula text (if it differs) for a disclosure. */
export function reasonWords(suggestions: readonly RoleSuggestion[], role: string, column: string | undefined): { readonly plain: string; readonly detail?: string } | null {
  const match = suggestionFor(suggestions, role, column);
  if (!match) return null;
  return match.plain ? { plain: match.plain, detail: match.reason } : { plain: match.reason };
}
