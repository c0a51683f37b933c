/** The safety statement every report carries (DESIGN §10). */
export const safetyNote =
  'A simulation estimates capacity; it does not validate safety. Sites with people near robots follow ISO 3691-4, ANSI/RIA R15.08 and ANSI/ITSDF B56.5 (as applicable) and local codes, with acceptance tests by qualified people.';
