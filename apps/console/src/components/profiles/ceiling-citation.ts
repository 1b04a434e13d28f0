/**
 * Where the 250 mm/s TCP ceiling comes from, shown beside it on the profile form and the ceilings page. The
 * 2011 edition was replaced in February 2025; the clause number is from memory, not verified.
 */
export const ISO_CEILING_CITATION =
  "ISO 10218-1:2011, manual reduced speed: TCP ≤ 250 mm/s (figure confirmed in secondary sources; clause number from memory). That edition was replaced in February 2025 by ISO 10218-1:2025, which keeps a reduced-speed mode";
