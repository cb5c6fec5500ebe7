/**
 * A table whose sorting, filtering and pagination are done by the server: the rows on screen
 * are one page of the loader's answer, and every header and pager control is a link that
 * changes the URL's search parameters (so it works by keyboard, from history, and without
 * JavaScript). @tanstack/react-table 9 (`useTable`, core features only) lays out headers and
 * cells; it neither sorts nor pages here.
 */
import { useMemo, type ReactNode } from "react";
import { Link, useLocation } from "react-router";
import { createColumnHelper, tableFeatures, useTable, type RowData } from "@tanstack/react-table";

const features = tableFeatures({});

export interface ServerColumn<T> {
  id: string;
  header: string;
  /** The server's sort key, when the column can be sorted. */
  sortKey?: string;
  align?: "left" | "right";
  cell: (row: T) => ReactNode;
}

export interface ServerTableProps<T> {
  columns: ServerColumn<T>[];
  rows: T[];
  rowKey: (row: T) => string;
  sort?: string;
  dir?: "asc" | "desc";
  caption?: string;
  testId?: string;
  empty?: ReactNode;
}

/** The current URL with some search parameters replaced (undefined removes one). */
export function useHrefWith() {
  const location = useLocation();
  return (changes: Record<string, string | number | undefined>) => {
    const p = new URLSearchParams(location.search);
    for (const [k, v] of Object.entries(changes)) {
      if (v === undefined || v === "") p.delete(k);
      else p.set(k, String(v));
    }
    const s = p.toString();
    return `${location.pathname}${s ? `?${s}` : ""}`;
  };
}

export function ServerTable<T extends RowData>({ columns, rows, rowKey, sort, dir, caption, testId, empty }: ServerTableProps<T>) {
  const hrefWith = useHrefWith();
  const helper = useMemo(() => createColumnHelper<typeof features, T>(), []);
  const defs = useMemo(
    () => helper.columns(columns.map((c) => helper.display({ id: c.id, header: c.header, cell: (ctx) => c.cell(ctx.row.original) }))),
    [columns, helper],
  );
  const byId = useMemo(() => new Map(columns.map((c) => [c.id, c])), [columns]);
  const table = useTable({ features, columns: defs, data: rows, getRowId: (r) => rowKey(r) });
  if (rows.length === 0 && empty) return <div className="card p-6 text-muted" data-testid={testId ? `${testId}-empty` : undefined}>{empty}</div>;
  return (
    <div className="card overflow-x-auto">
      <table className="w-full text-sm" data-testid={testId}>
        {caption ? <caption className="sr-only">{caption}</caption> : null}
        <thead className="border-b border-line bg-raised/60 text-left">
          {table.getHeaderGroups().map((group) => (
            <tr key={group.id}>
              {group.headers.map((header) => {
                const col = byId.get(header.column.id)!;
                const active = col.sortKey && col.sortKey === sort;
                const nextDir = active && dir === "desc" ? "asc" : "desc";
                return (
                  <th
                    key={header.id}
                    scope="col"
                    className={`whitespace-nowrap px-3 py-2 font-semibold ${col.align === "right" ? "text-right" : ""}`}
                    aria-sort={active ? (dir === "asc" ? "ascending" : "descending") : undefined}
                  >
                    {col.sortKey ? (
                      <Link to={hrefWith({ sort: col.sortKey, dir: nextDir, page: undefined })} className="hover:text-accent" data-sort={col.sortKey}>
                        {col.header}
                        <span aria-hidden="true" className="ml-1 text-muted">{active ? (dir === "asc" ? "▲" : "▼") : "↕"}</span>
                      </Link>
                    ) : (
                      col.header
                    )}
                  </th>
                );
              })}
            </tr>
          ))}
        </thead>
        <tbody>
          {table.getRowModel().rows.map((row) => (
            <tr key={row.id} className="border-b border-line/60 last:border-0 hover:bg-raised/40">
              {row.getAllCells().map((cell) => (
                <td key={cell.id} className={`px-3 py-2 align-top ${byId.get(cell.column.id)?.align === "right" ? "num whitespace-nowrap text-right" : ""}`}>
                  <table.FlexRender cell={cell} />
                </td>
              ))}
            </tr>
          ))}
        </tbody>
      </table>
    </div>
  );
}

/** Previous / next links and "page x of y" for a server-paged table. */
export function Pager({ page, pages, total, label = "rows" }: { page: number; pages: number; total: number; label?: string }) {
  const hrefWith = useHrefWith();
  return (
    <nav aria-label="Pages" className="flex items-center justify-between gap-3 text-sm">
      <span className="text-muted num" data-testid="pager-status">
        page {page} of {pages} · {total.toLocaleString("en")} {label}
      </span>
      <span className="flex gap-2">
        {page > 1 ? <Link className="btn-quiet" to={hrefWith({ page: page - 1 })}>← Previous</Link> : <span className="btn-quiet opacity-40" aria-disabled="true">← Previous</span>}
        {page < pages ? <Link className="btn-quiet" to={hrefWith({ page: page + 1 })} data-testid="pager-next">Next →</Link> : <span className="btn-quiet opacity-40" aria-disabled="true">Next →</span>}
      </span>
    </nav>
  );
}

/** CSV / JSON links for the API route that serves a table (same filters as the page). */
export function ExportLinks({ apiPath }: { apiPath: string }) {
  const location = useLocation();
  const p = new URLSearchParams(location.search);
  const withFormat = (f: string) => {
    const q = new URLSearchParams(p);
    q.set("format", f);
    if (f === "json") q.set("download", "1");
    return `${apiPath}${apiPath.includes("?") ? "&" : "?"}${q.toString()}`;
  };
  return (
    <span className="flex gap-2 text-sm">
      <a className="btn-quiet" href={withFormat("csv")} download data-testid="export-csv">CSV</a>
      <a className="btn-quiet" href={withFormat("json")} download data-testid="export-json">JSON</a>
    </span>
  );
}
