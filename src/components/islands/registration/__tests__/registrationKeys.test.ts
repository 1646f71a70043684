import { describe, it, expect } from 'vitest';
import { registrationKeyCommand } from '../registrationKeys';

const key = (k: string, mod: Partial<{ ctrlKey: boolean; metaKey: boolean }> = {}) => ({ key: k, ctrlKey: false, metaKey: false, ...mod });
const free = { inField: false, onButton: false };
const idle = { hasSelection: false, hasSuggestion: false };

describe('registrationKeyCommand', () => {
  it('maps the keys listed under the workspace', () => {
    expect(registrationKeyCommand(key('u'), free, idle)).toEqual({ command: 'undo', preventDefault: true });
    expect(registrationKeyCommand(key('z', { ctrlKey: true }), free, idle)).toEqual({ command: 'undo', preventDefault: true });
    expect(registrationKeyCommand(key('z', { metaKey: true }), free, idle)).toEqual({ command: 'undo', preventDefault: true });
    expect(registrationKeyCommand(key('z'), free, idle)).toBeNull();
    expect(registrationKeyCommand(key('Escape'), free, idle)).toEqual({ command: 'cancel', preventDefault: false });
    expect(registrationKeyCommand(key('s', { ctrlKey: true }), free, idle)).toEqual({ command: 'save', preventDefault: true });
    expect(registrationKeyCommand(key('s'), free, idle)).toBeNull();
    expect(registrationKeyCommand(key('f'), free, idle)).toEqual({ command: 'findPairs', preventDefault: false });
  });

  it('deletes only with a pair selected, and accepts only a proposed partner', () => {
    expect(registrationKeyCommand(key('Delete'), free, idle)).toBeNull();
    expect(registrationKeyCommand(key('Backspace'), free, { ...idle, hasSelection: true })).toEqual({ command: 'deleteSelected', preventDefault: true });
    expect(registrationKeyCommand(key('Enter'), free, idle)).toBeNull();
    expect(registrationKeyCommand(key('Enter'), free, { ...idle, hasSuggestion: true })).toEqual({ command: 'acceptSuggestion', preventDefault: true });
  });

  it('leaves keys typed into a form field to the field, and Enter on a button to the button', () => {
    expect(registrationKeyCommand(key('u'), { inField: true, onButton: false }, idle)).toBeNull();
    expect(registrationKeyCommand(key('Backspace'), { inField: true, onButton: false }, { ...idle, hasSelection: true })).toBeNull();
    expect(registrationKeyCommand(key('Enter'), { inField: false, onButton: true }, { ...idle, hasSuggestion: true })).toBeNull();
    expect(registrationKeyCommand(key('u'), { inField: false, onButton: true }, idle)).toEqual({ command: 'undo', preventDefault: true });
  });
});
