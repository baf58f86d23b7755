"""Sessions: the SQLite store with its migrations, log ingest, the frame log, summaries and exports."""
