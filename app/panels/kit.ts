/**
 * The small pieces every panel is built of: an edit that marks its field when refused, number fields, titled
 * blocks, file pickers and drop areas, drop-down lists, and the fields that keep what was typed across redraws.
 * DOM building itself (text only) is app/dom.ts.
 */
import type { PanelHost } from '../panel-host.ts';
import { h } from '../dom.ts';
import { errorLines, type WorkState } from '../state.ts';

/** What an edit needs of the host: to show a refusal, and to commit the edited state. */
export type EditHost = Pick<PanelHost, 'say' | 'commit'>;

/** Applies an edit of the state; a thrown error marks the input and shows the message (the value is kept). */
export async function tryEdit(
  host: EditHost,
  input: HTMLElement | null,
  edit: () => WorkState,
  opts: { recompute?: boolean } = {},
): Promise<void> {
  let next: WorkState;
  try {
    next = edit();
  } catch (e) {
    input?.classList.add('invalid');
    host.say('error', errorLines(e));
    return;
  }
  input?.classList.remove('invalid');
  await host.commit(next, opts);
}

/** A number field that reports on change (an empty field gives NaN, for the edit to refuse). */
export function numberIn(
  value: number | '',
  attrs: Record<string, string | number>,
  onValue: (v: number, el: HTMLInputElement) => void,
): HTMLInputElement {
  const el = h('input', { type: 'number', value, step: 'any', ...attrs });
  el.addEventListener('change', () => {
    const v = el.value.trim() === '' ? NaN : Number(el.value);
    onValue(v, el);
  });
  return el;
}

/** A titled block of a panel. */
export function section(title: string, ...children: (Node | string | null | false)[]): HTMLElement {
  return h('section', { className: 'block' }, h('h3', {}, title), ...children);
}

/** A labelled file input; the picked files go to `onFiles` and the input is emptied (the same file can be picked again). */
export function filePicker(
  id: string,
  label: string,
  accept: string,
  multiple: boolean,
  onFiles: (f: File[]) => void,
): HTMLElement {
  const input = h('input', { type: 'file', id, accept, multiple });
  input.addEventListener('change', () => {
    const files = [...(input.files ?? [])];
    input.value = '';
    if (files.length) onFiles(files);
  });
  return h('label', { className: 'picker' }, label, ' ', input);
}

/** A drop area for files (the whole panel area also accepts drops, see main.ts). */
export function dropZone(text: string, onFiles: (f: File[]) => void, id?: string): HTMLElement {
  const z = h('div', { className: 'drop', id }, text);
  z.addEventListener('dragover', (e) => {
    e.preventDefault();
    z.classList.add('over');
  });
  z.addEventListener('dragleave', () => z.classList.remove('over'));
  z.addEventListener('drop', (e) => {
    e.preventDefault();
    e.stopPropagation();
    z.classList.remove('over');
    const files = [...(e.dataTransfer?.files ?? [])];
    if (files.length) onFiles(files);
  });
  return z;
}

/** A drop-down list of [value, label] options, reporting on change. */
export function choice<T extends string>(
  attrs: Record<string, string>,
  options: [T | '', string][],
  value: T | '',
  onValue: (v: T | '', el: HTMLSelectElement) => void,
): HTMLSelectElement {
  const el = h('select', attrs, ...options.map(([v, label]) => h('option', { value: v }, label)));
  el.value = value;
  el.addEventListener('change', () => onValue(el.value as T | '', el));
  return el;
}

/**
 * Fields marked data-keep hold what the user typed across redraws of the panel (a job's start redraws it): their
 * values are put back from the host's `form` (by element id) and every change is written there.
 */
export function keepTyped(panel: HTMLElement, host: Pick<PanelHost, 'form'>): void {
  for (const f of panel.querySelectorAll<HTMLInputElement>('[data-keep][id]')) {
    const v = host.form[f.id];
    if (v === undefined) continue;
    if (f.type === 'checkbox') f.checked = v === 'true';
    else f.value = v;
  }
  const remember = (e: Event) => {
    const f = e.target as HTMLInputElement;
    if (f.id && f.hasAttribute('data-keep'))
      host.form[f.id] = f.type === 'checkbox' ? String(f.checked) : f.value;
  };
  panel.addEventListener('input', remember);
  panel.addEventListener('change', remember);
}
