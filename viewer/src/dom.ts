/**
 * Small DOM builders of the page. Text goes in with textContent only: names from a user's
 * files are never parsed as markup.
 */

export function el<K extends keyof HTMLElementTagNameMap>(tag: K, cls?: string, text?: string): HTMLElementTagNameMap[K] {
  const e = document.createElement(tag);
  if (cls) e.className = cls;
  if (text !== undefined) e.textContent = text;
  return e;
}

/** A titled section of the side panel. */
export function section(parent: HTMLElement, title: string): HTMLElement {
  const s = el("section", "sm-section");
  s.appendChild(el("h2", undefined, title));
  parent.appendChild(s);
  return s;
}

/** A control with its label, as one row. */
export function labelled(parent: HTMLElement, text: string, control: HTMLElement): HTMLLabelElement {
  const l = el("label", "sm-row");
  l.appendChild(el("span", undefined, text));
  l.appendChild(control);
  parent.appendChild(l);
  return l;
}

/** A drop-down of [value, text] options. */
export function select(options: Array<[string, string]>): HTMLSelectElement {
  const s = el("select");
  for (const [value, text] of options) {
    const o = el("option", undefined, text);
    o.value = value;
    s.appendChild(o);
  }
  return s;
}

export function checkbox(checked: boolean): HTMLInputElement {
  const c = el("input");
  c.type = "checkbox";
  c.checked = checked;
  return c;
}

export function slider(min: number, max: number, step: number, value: number): HTMLInputElement {
  const s = el("input");
  s.type = "range";
  s.min = String(min); s.max = String(max); s.step = String(step); s.value = String(value);
  return s;
}
