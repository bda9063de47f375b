/** What a key press on the run view asks for. */
export type ShortcutAction = 'segment-open' | 'segment-close' | 'mark' | 'note' | 'label' | 'ack' | 'theme' | 'runs' | 'help';

/** The page's keyboard shortcuts: key → action (also printed in the on-page key card). */
export const SHORTCUTS: readonly { key: string; action: ShortcutAction; text: string }[] = [
  { key: '[', action: 'segment-open', text: 'open a segment now' },
  { key: ']', action: 'segment-close', text: 'close the open segment' },
  { key: '.', action: 'mark', text: 'drop a point mark now' },
  { key: 'l', action: 'label', text: 'edit the tag label' },
  { key: 'n', action: 'note', text: 'edit the tag note' },
  { key: 'k', action: 'ack', text: 'acknowledge the newest open alert' },
  { key: 'd', action: 'theme', text: 'switch dusk / daylight theme' },
  { key: 'g', action: 'runs', text: 'go to the run list' },
  { key: '?', action: 'help', text: 'show or hide this key card' },
];

/**
 * The action of a key press, or null. Keys typed into a text field, and chords with Ctrl, Alt
 * or Meta, are never shortcuts. O(shortcuts).
 *
 * @example
 * shortcutFor({ key: '[', ctrlKey: false, altKey: false, metaKey: false }, false) // → 'segment-open'
 */
export function shortcutFor(e: { key: string; ctrlKey: boolean; altKey: boolean; metaKey: boolean }, inTextField: boolean): ShortcutAction | null {
  if (inTextField || e.ctrlKey || e.altKey || e.metaKey) return null;
  const key = e.key.length === 1 ? e.key.toLowerCase() : e.key;
  return SHORTCUTS.find((s) => s.key === key)?.action ?? null;
}
