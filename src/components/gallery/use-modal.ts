import { useEffect, useRef, type KeyboardEvent, type RefObject } from 'react';

const FOCUSABLE = 'a[href], button:not([disabled]), textarea:not([disabled]), input:not([disabled]), select:not([disabled]), [tabindex]:not([tabindex="-1"])';

/**
 * A native modal <dialog>: opened with showModal (the page behind becomes inert), Esc closes it
 * through onClose, Tab and Shift+Tab wrap inside it, and on close focus goes back to where the
 * caller says (the frame that was last shown), or to what had it before.
 */
export function useModal(onClose: () => void, returnFocus?: () => HTMLElement | null) {
  const ref = useRef<HTMLDialogElement>(null);
  const onCloseRef = useRef(onClose);
  onCloseRef.current = onClose;
  const returnRef = useRef(returnFocus);
  returnRef.current = returnFocus;

  useEffect(() => {
    const dialog = ref.current;
    if (!dialog) return;
    const before = document.activeElement as HTMLElement | null;
    if (!dialog.open) dialog.showModal();
    const cancel = (e: Event) => {
      e.preventDefault();
      onCloseRef.current();
    };
    dialog.addEventListener('cancel', cancel);
    const { overflow } = document.body.style;
    document.body.style.overflow = 'hidden';
    return () => {
      dialog.removeEventListener('cancel', cancel);
      if (dialog.open) dialog.close();
      document.body.style.overflow = overflow;
      const target = returnRef.current?.() ?? before;
      // After React has removed the dialog, so the browser's own focus restoring does not win.
      requestAnimationFrame(() => target?.focus({ preventScroll: false }));
    };
  }, []);

  const trapTab = (e: KeyboardEvent) => {
    if (e.key !== 'Tab' || !ref.current) return;
    const items = [...ref.current.querySelectorAll<HTMLElement>(FOCUSABLE)].filter((el) => el.offsetParent !== null || el === document.activeElement);
    if (!items.length) return;
    const first = items[0];
    const last = items[items.length - 1];
    if (e.shiftKey && (document.activeElement === first || !ref.current.contains(document.activeElement))) {
      e.preventDefault();
      last.focus();
    } else if (!e.shiftKey && document.activeElement === last) {
      e.preventDefault();
      first.focus();
    }
  };

  return { ref: ref as RefObject<HTMLDialogElement>, trapTab };
}
