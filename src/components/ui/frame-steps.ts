/** Stepping through a shoot's frames in a full-screen view: buttons, arrow keys and swipes share it. */

interface ArrowKeyEvent {
  key: string;
  altKey: boolean;
  ctrlKey: boolean;
  metaKey: boolean;
  defaultPrevented: boolean;
  target: EventTarget | null;
  preventDefault(): void;
}

const TYPING = new Set(['INPUT', 'TEXTAREA', 'SELECT']);

export function frameSteps(index: number, count: number, onIndex: (next: number) => void) {
  const go = (delta: number) => {
    const next = index + delta;
    if (next >= 0 && next < count) onIndex(next);
  };
  /** Left and right arrows step; keys typed into a field, or with a modifier, stay with the field or the browser. */
  const onArrowKey = (e: ArrowKeyEvent) => {
    if (e.defaultPrevented || e.altKey || e.ctrlKey || e.metaKey) return;
    if (e.target instanceof HTMLElement && TYPING.has(e.target.tagName)) return;
    const delta = e.key === 'ArrowRight' ? 1 : e.key === 'ArrowLeft' ? -1 : 0;
    if (!delta) return;
    e.preventDefault();
    go(delta);
  };
  return { go, onArrowKey, hasPrev: index > 0, hasNext: index < count - 1 };
}
