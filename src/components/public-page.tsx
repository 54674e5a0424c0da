import type { ReactNode } from "react";
import { BrandMark } from "./brand-mark";

/** The frame of the pages people see before they are signed in: the mark, a title, one sheet. */
export function PublicPage({
  title,
  heading,
  subheading,
  children,
  below,
}: {
  title: string;
  heading: ReactNode;
  subheading?: ReactNode;
  children: ReactNode;
  below?: ReactNode;
}) {
  return (
    <div className="flex min-h-screen flex-col items-center justify-center px-6 py-16">
      <title>{`${title} · Platen`}</title>
      <div className="w-full max-w-sm">
        <div className="mb-8 text-center">
          <BrandMark className="mx-auto size-10" />
          <h1 className="mt-5 text-2xl font-semibold tracking-tight text-ink">{heading}</h1>
          {subheading && <p className="mt-1 text-sm text-ink-muted">{subheading}</p>}
        </div>
        <div className="rounded-xl border border-paper-300 bg-paper-50 px-7 py-7 shadow-sheet">{children}</div>
        {below && <div className="mt-4 text-center text-sm text-ink-muted">{below}</div>}
      </div>
    </div>
  );
}
