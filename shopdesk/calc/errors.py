"""The one error the calculation library raises for input it cannot use."""


class CalcInputError(ValueError):
    """An input a calculator cannot use, with a message a technician can act on.

    The message names the input and, where there is one, the allowed range.
    """
