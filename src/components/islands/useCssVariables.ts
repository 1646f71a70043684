import { useLayoutEffect, type RefObject } from 'react';

/** CSS custom properties by name (`--bar-width`); null removes one. */
export type CssVariables = Record<`--${string}`, string | number | null>;

/**
 * Sets CSS custom properties on an element for values known only at run time (a width from a zoom, a colour
 * from the data), so the element's classes can read them (`w-(--bar-width)`) and no JSX `style` prop is
 * needed (eslint.config.mjs forbids it in src/components). Set before paint, after every render.
 *
 * @param ref - the element
 * @param vars - the properties and their values (numbers are written as they are: give units where CSS needs them)
 */
export function useCssVariables(ref: RefObject<HTMLElement | null>, vars: CssVariables): void {
  useLayoutEffect(() => {
    const el = ref.current;
    if (!el) return;
    for (const [name, value] of Object.entries(vars)) {
      if (value === null) el.style.removeProperty(name);
      else el.style.setProperty(name, String(value));
    }
  });
}
