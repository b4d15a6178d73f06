/**
 * A question with a few answers, as a modal dialog (text only, see dom.ts). Resolves to the chosen answer's
 * value, or null when the dialog is closed with Escape or "Cancel". Used where a change would otherwise lose the
 * planner's work or refuse their file: every path leads somewhere.
 */
import { h } from './dom.ts';

export interface Answer<T> {
  label: string;
  value: T;
  /** The answer that Enter picks. */
  primary?: boolean;
  /** Runs on click without closing the dialog (e.g. "Save the current scenario file first"). */
  run?: () => void;
  id?: string;
}

export function ask<T>(
  title: string,
  lines: string[],
  answers: Answer<T>[],
  opts: { id?: string } = {},
): Promise<T | null> {
  return new Promise((resolve) => {
    let done = false;
    const finish = (v: T | null) => {
      if (done) return;
      done = true;
      dialog.close();
      dialog.remove();
      resolve(v);
    };
    const buttons = answers.map((a) =>
      h(
        'button',
        {
          id: a.id,
          className: a.primary ? 'primary' : '',
          onclick: () => (a.run ? a.run() : finish(a.value)),
        },
        a.label,
      ),
    );
    const dialog = h(
      'dialog',
      { className: 'ask', id: opts.id, 'aria-label': title },
      h('h2', {}, title),
      ...lines.map((l) => h('p', {}, l)),
      h(
        'div',
        { className: 'ask-answers' },
        ...buttons,
        h('button', { className: 'ask-cancel', onclick: () => finish(null) }, 'Cancel'),
      ),
    );
    dialog.addEventListener('cancel', () => finish(null));
    document.body.appendChild(dialog);
    dialog.showModal();
    (buttons[answers.findIndex((a) => a.primary)] ?? buttons[0])?.focus();
  });
}
