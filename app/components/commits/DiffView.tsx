import type { ParsedDiff, DiffLine } from "~/services/diff-view.server";

const ROW: Record<DiffLine["kind"], string> = { add: "diff-add", del: "diff-del", ctx: "", hunk: "diff-hunk" };
const MARK: Record<DiffLine["kind"], string> = { add: "+", del: "−", ctx: " ", hunk: "" };

/**
 * The diff, file by file. Line HTML was made on the server by highlight.js (escaped text inside
 * its spans, app/services/diff-view.server.ts), so it is set as HTML here.
 */
export function DiffView({ diff, moreHref }: { diff: ParsedDiff; moreHref: string | null }) {
  const hidden = diff.totalLines - diff.shownLines;
  return (
    <div className="space-y-4" data-testid="diff" data-ident>
      <table className="num text-xs" data-testid="diff-summary">
        <tbody>
          {diff.files.map((f, i) => (
            <tr key={`${f.oldPath ?? ""}>${f.path}`}>
              <td className="pr-3 text-right text-good">{f.binary ? "bin" : `+${f.added}`}</td>
              <td className="pr-3 text-right text-bad">{f.binary ? "" : `−${f.removed}`}</td>
              <td>
                <a className="hover:underline" href={`#diff-${i}`}>{f.oldPath ? `${f.oldPath} → ${f.path}` : f.path}</a>
              </td>
            </tr>
          ))}
        </tbody>
      </table>
      {diff.files.map((f, i) => (
        <section key={`${f.oldPath ?? ""}>${f.path}`} id={`diff-${i}`} className="card overflow-hidden" data-diff-file={f.path}>
          <h3 className="num flex flex-wrap items-center gap-2 border-b border-line px-3 py-2 text-sm">
            <span className="text-muted">{f.status}</span>
            <span className="font-medium">{f.oldPath ? `${f.oldPath} → ${f.path}` : f.path}</span>
            <span className="text-good">+{f.added}</span>
            <span className="text-bad">−{f.removed}</span>
            {f.language ? <span className="text-xs text-muted">({f.language})</span> : null}
          </h3>
          {f.binary ? (
            <p className="px-3 py-2 text-sm text-muted">Binary file: not shown.</p>
          ) : (
            <div className="overflow-x-auto">
              <table className="num w-full border-collapse text-xs leading-5">
                <tbody>
                  {f.lines.map((l, i) => (
                    <tr key={i} className={ROW[l.kind]} data-kind={l.kind}>
                      <td className="w-10 select-none pr-2 text-right text-muted">{l.oldNo ?? ""}</td>
                      <td className="w-10 select-none pr-2 text-right text-muted">{l.newNo ?? ""}</td>
                      <td className="w-4 select-none text-muted" aria-hidden="true">{MARK[l.kind]}</td>
                      <td className="whitespace-pre pr-3" dangerouslySetInnerHTML={{ __html: l.html }} />
                    </tr>
                  ))}
                </tbody>
              </table>
              {f.hidden ? <p className="px-3 py-1 text-xs text-muted">{f.hidden} more line(s) of this file not shown.</p> : null}
            </div>
          )}
        </section>
      ))}
      {hidden > 0 ? (
        <p className="text-sm" data-testid="diff-more">
          Showing {diff.shownLines} of {diff.totalLines} diff lines.{" "}
          {moreHref ? (
            <a className="text-accent hover:underline" href={moreHref}>
              Show more
            </a>
          ) : (
            "The rest is too long for a page: use git show."
          )}
        </p>
      ) : null}
    </div>
  );
}
