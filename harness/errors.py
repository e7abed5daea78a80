"""The error types a command ends with as one line: bad user input (exit status 2), and a
database server that stopped answering for longer than Heedful waits (exit status 3)."""


class InputError(Exception):
    """Bad input from the user (suite file, data file, command line). Message is one line."""

    def __init__(self, message: str) -> None:
        super().__init__(" ".join(message.split()))


class ServiceOutage(Exception):
    """A store or tuning storage server that went away mid-command and did not come back in
    time: not bad input, a failing run (exit 3). Message is one line; what was stored stays."""

    def __init__(self, message: str) -> None:
        super().__init__(" ".join(message.split()))


# errors that stop every run of an execution rather than failing the one run that raised
STOPPING = (InputError, ServiceOutage)
