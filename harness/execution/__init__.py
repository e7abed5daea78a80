"""Takes run specs; gives finished runs, trained by an executor (local processes or a Dask
cluster, harness/execution/executors.py) and stored as each ends."""
