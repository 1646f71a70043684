import { useEffect, useRef } from 'react';

/** Renders an Observable Plot figure (built by `make` in the browser) into a div. */
export function PlotFigure({ make, label }: { make: () => Element; label: string }) {
  const ref = useRef<HTMLDivElement>(null);
  useEffect(() => {
    const figure = make();
    ref.current?.replaceChildren(figure);
    return () => figure.remove();
  }, [make]);
  return <div ref={ref} role="img" aria-label={label} className="overflow-x-auto" />;
}
