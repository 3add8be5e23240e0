import { Link } from "react-router";

/** Links to the first, previous, next and last page; `href(page)` builds each address. */
export function Pager({ page, pageCount, total, size, href, noun = "records" }: { page: number; pageCount: number; total: number; size: number; href: (page: number) => string; noun?: string }) {
  const first = total === 0 ? 0 : (page - 1) * size + 1;
  const last = Math.min(total, page * size);
  const step = (to: number, label: string, rel?: string) =>
    to >= 1 && to <= pageCount && to !== page ? (
      <Link to={href(to)} rel={rel} className="btn no-underline">{label}</Link>
    ) : (
      <span className="btn opacity-50" aria-disabled="true">{label}</span>
    );
  return (
    <nav aria-label="Pages" className="flex flex-wrap items-center justify-between gap-3 text-sm">
      <p className="text-muted" aria-live="polite">
        <span className="figure">{first.toLocaleString("en-GB")}</span>–<span className="figure">{last.toLocaleString("en-GB")}</span> of{" "}
        <span className="figure">{total.toLocaleString("en-GB")}</span> {noun} · page <span className="figure">{page}</span> of <span className="figure">{pageCount}</span>
      </p>
      <div className="flex gap-2">
        {step(1, "First")}
        {step(page - 1, "Previous", "prev")}
        {step(page + 1, "Next", "next")}
        {step(pageCount, "Last")}
      </div>
    </nav>
  );
}
