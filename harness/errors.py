"""The one error type for bad user input: printed as one line, exit status 2."""


class InputError(Exception):
    """Bad input from the user (suite file, data file, command line). Message is one line."""

    def __init__(self, message: str) -> None:
        super().__init__(" ".join(message.split()))
