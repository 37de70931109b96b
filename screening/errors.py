"""Typed errors. Every error carries what was given, where, and what was expected.

`InputError` is what the CLI turns into one message and exit code 2.
`NotApplicable` is what a model raises (or records) outside its validity range;
the screening turns it into "not applicable" with the reason, never a number.
Every error here pickles with its message and fields (a worker process can raise it).
"""

from __future__ import annotations


def _rebuild(cls: type, args: tuple, fields: dict) -> "ScreeningError":
    """Unpickle a project error: the same class, arguments and fields, without calling ``__init__``
    (whose signature differs from the exception's ``args``)."""
    exc = cls.__new__(cls, *args)
    exc.args = args
    exc.__dict__.update(fields)
    return exc


class ScreeningError(ValueError):
    """Base class of the package's own errors.

    Every subclass pickles with its message and fields (``__reduce__`` below), so an error raised in a
    worker process comes back to the caller as itself, whatever the subclass's ``__init__`` takes.
    """

    def __reduce__(self):
        return _rebuild, (type(self), self.args, dict(self.__dict__))


class InputError(ScreeningError):
    """Bad input: names the file, the key (or row and column), what was given and what was expected."""

    def __init__(
        self,
        message: str,
        *,
        file: str | None = None,
        key: str | None = None,
        row: int | None = None,
        column: str | None = None,
        given: object = None,
        expected: str | None = None,
    ) -> None:
        self.message = message
        self.file = file
        self.key = key
        self.row = row
        self.column = column
        self.given = given
        self.expected = expected
        super().__init__(self.__str__())

    def located(self, **where: object) -> "InputError":
        """Return a copy with the missing location fields filled in."""
        fields = dict(
            file=self.file, key=self.key, row=self.row, column=self.column,
            given=self.given, expected=self.expected,
        )
        for k, v in where.items():
            if fields.get(k) is None:
                fields[k] = v
        return InputError(self.message, **fields)

    def __str__(self) -> str:
        where = []
        if self.file:
            where.append(str(self.file))
        if self.row is not None:
            where.append(f"row {self.row}")
        if self.column:
            where.append(f"column '{self.column}'")
        if self.key:
            where.append(f"key '{self.key}'")
        head = ", ".join(where)
        text = f"{head}: {self.message}" if head else self.message
        if self.given is not None:
            text += f" (given: {self.given!r}"
            text += f"; expected: {self.expected})" if self.expected else ")"
        elif self.expected:
            text += f" (expected: {self.expected})"
        return text


class UnknownGas(InputError):
    """A gas name that is not in the library; carries the closest names."""

    def __init__(self, name: str, suggestions: list[str], **where: object) -> None:
        self.suggestions = suggestions
        hint = ("; closest names: " + ", ".join(suggestions)) if suggestions else ""
        super().__init__(
            f"unknown gas '{name}'{hint}",
            given=name,
            expected="a gas from the library (run 'screening gases')",
            **where,
        )


class NotApplicable(ScreeningError):
    """A model asked for a state outside its validity range.

    Carries the model name, the offending value(s) and the range, in plain words.
    """

    def __init__(self, model: str, reason: str, value: object = None, valid_range: str | None = None) -> None:
        self.model = model
        self.reason = reason
        self.value = value
        self.valid_range = valid_range
        super().__init__(f"{model}: {reason}")


class OutputError(InputError):
    """An output file that cannot be written (a refused target, no space, no permission): names the file
    and the cause. The CLI treats it as bad input: one message, exit code 2, nothing lost."""
