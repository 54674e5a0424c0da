const glyph = (d: string, label?: string) =>
  function Glyph({ className = "size-4" }: { className?: string }) {
    return (
      <svg viewBox="0 0 16 16" className={className} aria-hidden={label ? undefined : true}>
        <path d={d} fill="none" stroke="currentColor" strokeWidth="1.5" strokeLinecap="round" strokeLinejoin="round" />
      </svg>
    );
  };

export const UpIcon = glyph("M4 10l4-4 4 4");
export const DownIcon = glyph("M4 6l4 4 4-4");
export const RemoveIcon = glyph("M4 4l8 8M12 4l-8 8");
export const PlusIcon = glyph("M8 3v10M3 8h10");
export const GripIcon = glyph("M6 4h.01M10 4h.01M6 8h.01M10 8h.01M6 12h.01M10 12h.01");
export const PickIcon = glyph("M10.5 2.5l3 3-7 7H3.5v-3zM9 4l3 3");
