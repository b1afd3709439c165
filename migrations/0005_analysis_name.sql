-- A saved analysis may carry a name the user gives it on the screens ("N rate, all sites 2019-24").
-- NULL until named; the screens then show the trait and date instead.
ALTER TABLE analysis ADD COLUMN name TEXT;
