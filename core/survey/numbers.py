"""One parser for every number a person or a file gives Stakeline, with one error type.

:func:`parse_number` turns what was typed, read from a file or passed in a script into a finite
float, or raises :class:`NumberError` (a :class:`stakeline.errors.SurveyError`, so a
``ValueError``) whose message names the value and shows it plainly -- ``0``, ``'abc'``, never
``np.float64(0.0)``.  Layers that have their own error class (the store's, the service's) pass it
as ``error``: the raised exception is then both that class and a :class:`NumberError`.

>>> parse_number("1,25", "reading", decimal_comma=True)
1.25
>>> parse_number(0.0, "Manning's n", positive=True)
Traceback (most recent call last):
...
stakeline.survey.numbers.NumberError: Manning's n must be a positive number, got 0.0
"""

from __future__ import annotations

import functools
import math
import numbers
from typing import Any

from stakeline.errors import SurveyError


class NumberError(SurveyError):
    """A value that is not the number asked for; ``what`` names it and ``value`` is as given.

    Examples
    --------
    >>> try:
    ...     parse_number("1,5", "reading")
    ... except NumberError as exc:
    ...     print(exc.what, repr(exc.value))
    reading '1,5'
    """

    what: str = ""
    value: Any = None


@functools.cache
def _error_class(error: type) -> type:
    """``error`` made a :class:`NumberError` too (the same class when it already is one)."""
    if issubclass(error, NumberError):
        return error
    if not issubclass(error, SurveyError):
        raise TypeError(f"{error.__name__} is not a SurveyError")
    return type(error.__name__, (error, NumberError), {"__module__": error.__module__})


def plain(value: Any, limit: int = 60) -> str:
    """``value`` as a person reads it: numbers plainly, text quoted, long things cut short.

    >>> import numpy as np
    >>> plain(np.float64(0.0)), plain("abc"), plain(10**400), plain(None)
    ('0.0', "'abc'", 'an integer of 401 digits', 'None')
    """
    if isinstance(value, bool) or value is None:
        return repr(value)
    if isinstance(value, numbers.Integral):
        digits = len(str(abs(int(value)))) if abs(int(value)).bit_length() < 10_000 else None
        if digits is None or digits > 30:
            count = digits or int(abs(int(value)).bit_length() * math.log10(2)) + 1
            return f"an integer of {count} digits"
        return str(int(value))
    if isinstance(value, numbers.Real):
        return repr(float(value))
    text = repr(value)
    return text if len(text) <= limit else text[: limit - 3] + "..."


def _as_float(value: Any, decimal_comma: bool) -> float | None:
    """``value`` as a float, or None when it is not a number at all (inf and NaN are floats)."""
    if isinstance(value, bool):
        return None
    if isinstance(value, str):
        text = value.strip()
        if decimal_comma:
            text = text.replace(",", ".")
        if "_" in text:  # Python reads 1_0 as 10; a person did not mean that
            return None
        value = text
    elif isinstance(value, numbers.Integral):
        try:
            return float(value)
        except OverflowError:
            return math.inf
    try:
        return float(value)
    except (TypeError, ValueError, OverflowError):
        return None


def parse_number(
    value: Any,
    what: str,
    *,
    positive: bool = False,
    optional: bool = False,
    decimal_comma: bool = False,
    error: type = NumberError,
) -> float | None:
    """``value`` as a finite float, else an error naming ``what``.

    Parameters
    ----------
    value : str, int, float or None
        What was given.  Text is stripped; an empty text counts as not given.
    what : str
        The quantity in plain words, for the message ("reading at station 2.5").
    positive : bool
        Refuse zero and negative numbers.
    optional : bool
        Return None for None or an empty text instead of refusing it.
    decimal_comma : bool
        Read a comma as the decimal point (what a keypad or a local spreadsheet gives).
    error : type
        The caller's own :class:`stakeline.errors.SurveyError` subclass; the exception raised is
        both it and a :class:`NumberError`.

    Returns
    -------
    float or None

    Examples
    --------
    >>> parse_number(" 3. ", "reading"), parse_number("", "line check", optional=True)
    (3.0, None)
    >>> parse_number("nan", "station")
    Traceback (most recent call last):
    ...
    stakeline.survey.numbers.NumberError: station 'nan' is not a finite number
    """
    empty = value is None or (isinstance(value, str) and not value.strip())
    if empty and optional:
        return None
    number = None if empty else _as_float(value, decimal_comma)
    if number is None:
        hint = "; type digits and one point" if decimal_comma and not empty else ""
        message = f"{what} is empty; give a number" if empty else ""
        raise _failure(
            error, message or f"{what} {plain(value)} is not a number{hint}", what, value
        )
    if not math.isfinite(number):
        raise _failure(error, f"{what} {plain(value)} is not a finite number", what, value)
    if positive and not number > 0:
        raise _failure(error, f"{what} must be a positive number, got {plain(value)}", what, value)
    return number


def _failure(error: type, message: str, what: str, value: Any) -> NumberError:
    exc = _error_class(error)(message)
    exc.what, exc.value = what, value
    return exc


def decimals_for(difference: float, least: int = 3, most: int = 12) -> int:
    """Decimals that show ``difference`` as non-zero (at least ``least``, at most ``most``).

    >>> decimals_for(0.5), decimals_for(1.0000000005838672e-07), decimals_for(0.0)
    (3, 7, 3)
    """
    d = abs(float(difference))
    if not (math.isfinite(d) and d > 0):
        return least
    return int(min(max(least, -math.floor(math.log10(d))), most))
