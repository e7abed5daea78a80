"""Takes finished runs and data profiles; gives them back from the result store (an SQLite file
or a PostgreSQL database, the same tables in both)."""
