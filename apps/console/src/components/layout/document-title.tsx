/**
 * The window's title for a page: "<page> · Jogwright". React 19 hoists the <title> into the document head
 * and restores the previous one when the page goes.
 */
export function DocumentTitle({ page }: { page: string }) {
  return <title>{`${page} · Jogwright`}</title>;
}
