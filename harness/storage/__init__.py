"""Takes finished runs, data profiles and gate-history rows; gives them back from the result store
(an SQLite file or a PostgreSQL database, the same tables in both)."""
