import { useEffect, useRef, useState, type RefObject } from 'react';
import OpenSeadragon from 'openseadragon';

/**
 * OpenSeadragon viewers for an island: created once the host elements exist, destroyed when `key` changes
 * and on unmount. Returned as state, so the hooks that attach to them (sync, scale bar, pointer, markers)
 * run again for each new set.
 *
 * @param options - the options of each viewer (each with its `element`), or null while a host is missing;
 *   read when `key` changes. With `navigatorHolder`, the first viewer's overview goes into a fresh element
 *   inside it, passed here as `navigatorElement`.
 * @param key - changes when the viewers must be made again (another field, another set of layers)
 * @param navigatorHolder - box for the first viewer's overview (navigator), if it shows one
 * @returns the viewers, the first one leading; empty until created
 */
export function useOpenSeadragonViewers(
  options: (navigatorElement: HTMLElement | undefined) => OpenSeadragon.Options[] | null,
  key: string,
  navigatorHolder?: RefObject<HTMLElement | null>,
): OpenSeadragon.Viewer[] {
  const [viewers, setViewers] = useState<OpenSeadragon.Viewer[]>([]);
  const optionsRef = useRef(options);
  optionsRef.current = options;
  useEffect(() => {
    const holder = navigatorHolder?.current ?? null;
    if (navigatorHolder && !holder) return;
    // OpenSeadragon wraps and later removes its overview element, so it gets one React does not manage
    let navElement: HTMLDivElement | undefined;
    if (holder) {
      navElement = document.createElement('div');
      navElement.style.width = '100%';
      navElement.style.height = '100%';
      holder.replaceChildren(navElement);
    }
    const all = optionsRef.current(navElement);
    if (!all?.length) {
      navElement?.remove();
      return;
    }
    const made = all.map((o) => OpenSeadragon(o));
    setViewers(made);
    return () => {
      made.forEach((v) => v.destroy());
      navElement?.remove();
      setViewers([]);
    };
  }, [key]);
  return viewers;
}

/** One viewer in one host element: {@link useOpenSeadragonViewers} for a single image (or one composited stack). */
export function useOpenSeadragonViewer(
  host: RefObject<HTMLElement | null>,
  options: Omit<OpenSeadragon.Options, 'element'>,
  key: string,
): OpenSeadragon.Viewer | null {
  const [viewer] = useOpenSeadragonViewers(() => (host.current ? [{ ...options, element: host.current }] : null), key);
  return viewer ?? null;
}
