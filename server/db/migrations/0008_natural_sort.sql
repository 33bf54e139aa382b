-- Hand-written (drizzle-kit generate --custom): station names sort naturally,
-- digits by their value (KF2 before KF10), wherever SQL orders them. ICU's
-- root locale with numeric ordering ("kn", Unicode Technical Standard #35);
-- Debian's PostgreSQL is built with ICU. shared/natural-sort.ts orders the
-- same way in JavaScript (Intl.Collator 'und', numeric) for lists sorted in
-- the browser and in the release files.
CREATE COLLATION IF NOT EXISTS "tiepoint_natural" (provider = icu, locale = 'und-u-kn-true');
