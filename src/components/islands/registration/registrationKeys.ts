import { useEffect, useRef } from 'react';

/** What a key does in the registration workspace. */
export type RegistrationCommand = 'undo' | 'deleteSelected' | 'cancel' | 'acceptSuggestion' | 'save' | 'findPairs';

/**
 * The workspace's keys: u or Ctrl/⌘+Z undo, Delete/Backspace removes the selected pair, Esc cancels, Enter
 * accepts a proposed partner, Ctrl/⌘+S saves, f finds pairs. Keys typed into a form field are the field's.
 *
 * @param key - the key as `KeyboardEvent` reports it, with its modifiers
 * @param where - whether the key went to a form field, or to a button or link (where Enter is the button's)
 * @param state - whether a pair is selected and a partner is proposed
 * @returns the command and whether the browser's own action must be prevented, or null
 */
export function registrationKeyCommand(
  key: { key: string; ctrlKey: boolean; metaKey: boolean },
  where: { inField: boolean; onButton: boolean },
  state: { hasSelection: boolean; hasSuggestion: boolean },
): { command: RegistrationCommand; preventDefault: boolean } | null {
  if (where.inField) return null;
  const mod = key.ctrlKey || key.metaKey;
  if ((key.key === 'z' && mod) || key.key === 'u') return { command: 'undo', preventDefault: true };
  if ((key.key === 'Delete' || key.key === 'Backspace') && state.hasSelection) return { command: 'deleteSelected', preventDefault: true };
  if (key.key === 'Escape') return { command: 'cancel', preventDefault: false };
  if (key.key === 'Enter' && state.hasSuggestion && !where.onButton) return { command: 'acceptSuggestion', preventDefault: true };
  if (key.key === 's' && mod) return { command: 'save', preventDefault: true };
  if (key.key === 'f') return { command: 'findPairs', preventDefault: false };
  return null;
}

/**
 * Listens for the workspace's keys on the window for the island's lifetime and runs the current handler of
 * each command (handlers may change every render; the listener stays).
 */
export function useRegistrationKeys(
  state: { hasSelection: boolean; hasSuggestion: boolean },
  run: (command: RegistrationCommand) => void,
): void {
  const latest = useRef({ state, run });
  latest.current = { state, run };
  useEffect(() => {
    const onKey = (e: KeyboardEvent) => {
      const target = e.target instanceof Element ? e.target : null;
      const hit = registrationKeyCommand(
        e,
        { inField: !!target?.closest('input, select, textarea'), onButton: !!target?.closest('button, a') },
        latest.current.state,
      );
      if (!hit) return;
      if (hit.preventDefault) e.preventDefault();
      latest.current.run(hit.command);
    };
    window.addEventListener('keydown', onKey);
    return () => window.removeEventListener('keydown', onKey);
  }, []);
}
