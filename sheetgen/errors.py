"""One error family for the whole tool; the command line maps each to an exit code."""


class SheetgenError(Exception):
    """Base of every error sheetgen raises on purpose."""


class SpecError(ValueError, SheetgenError):
    """The input is wrong: a key, a unit, a value or a file.  Exit code 2.

    ``problems`` holds one line per problem, each naming the key path and,
    where known, the line in the file.
    """

    def __init__(self, problems):
        if isinstance(problems, str):
            problems = [problems]
        self.problems = list(problems)
        super().__init__("\n".join(self.problems))

    def __reduce__(self):
        # Rebuilt from its lines, so an error raised in a worker process arrives with them intact.
        return (type(self), (self.problems,))


class InfeasibleDesign(SheetgenError):
    """The spec is valid but no design can meet it.  Exit code 3.

    The message names the limit that was hit and what would work instead.
    """


class SimulationError(SheetgenError):
    """The transient solver could not converge; a bug or an extreme part set."""
