"""Takes run specs; gives finished runs, trained on local processes and stored as each ends."""
