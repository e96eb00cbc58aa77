"""Built-in models by name, for the command line: ``polytrope:3``, ``homogeneous``, ``composite``.

A model specification is a kind, optionally followed by ``:`` and comma-
separated settings: ``polytrope:3,mass=1.2,radius=8`` (the first bare value
of a polytrope is its index), ``homogeneous:gamma1=1.4``,
``composite:density_jump=9``. Masses are in M☉, radii in R☉; a value may be a
fraction such as ``5/3``.
"""

from __future__ import annotations

import inspect
from collections.abc import Callable
from fractions import Fraction
from typing import Any

from ..errors import OptionError
from .composite import composite_polytrope
from .polytropes import homogeneous_sphere, polytrope
from .profiles import StellarProfile

__all__ = ["BUILTIN_MODELS", "builtin_model", "is_builtin_model"]

#: Kind → (function, one-line description).
BUILTIN_MODELS: dict[str, tuple[Callable[..., StellarProfile], str]] = {
    "polytrope": (polytrope, "Lane–Emden polytrope; polytrope:N with 0 <= N < 5"),
    "homogeneous": (homogeneous_sphere, "homogeneous compressible sphere (Pekeris 1938)"),
    "composite": (composite_polytrope,
                  "illustrative red-giant-like core–envelope polytrope (not a stellar model)"),
}


def is_builtin_model(spec: str) -> bool:
    """True when ``spec`` names a built-in model rather than a file."""
    return str(spec).split(":", 1)[0].lower() in BUILTIN_MODELS


def _number(key: str, text: str) -> float | int:
    try:
        value = Fraction(text.strip())
    except (ValueError, ZeroDivisionError):
        raise OptionError(f"model setting {key}={text!r} is not a number",
                          hint="write e.g. mass=1.2 or gamma1=5/3") from None
    return int(value) if key == "points" else float(value)


def builtin_model(spec: str) -> StellarProfile:
    """Build the built-in model named by ``spec``.

    Parameters
    ----------
    spec : str
        ``kind[:settings]``, see the module notes; kinds are the keys of
        `BUILTIN_MODELS`.

    Returns
    -------
    StellarProfile
        The model in cgs.

    Raises
    ------
    OptionError
        For an unknown kind or setting, or a value that is not a number.
    """
    kind, _, rest = str(spec).partition(":")
    kind = kind.lower()
    if kind not in BUILTIN_MODELS:
        raise OptionError(f"unknown built-in model {kind!r}",
                          hint="choose one of " + ", ".join(BUILTIN_MODELS))
    function = BUILTIN_MODELS[kind][0]
    accepted = [name for name in inspect.signature(function).parameters if name != "n"]
    kwargs: dict[str, Any] = {}
    args: list[float] = []
    for item in filter(None, (part.strip() for part in rest.split(","))):
        key, eq, value = item.partition("=")
        if not eq:
            if kind != "polytrope" or args:
                raise OptionError(f"model setting {item!r} needs a name, as in mass=1.2",
                                  hint="settings: " + ", ".join(accepted))
            args.append(_number("n", key))
            continue
        key = key.strip().lower()
        if key == "n" and kind == "polytrope":
            args.append(_number("n", value))
            continue
        if key not in accepted:
            raise OptionError(f"{kind} has no setting {key!r}",
                              hint="settings: " + ", ".join(accepted))
        kwargs[key] = _number(key, value)
    if kind == "polytrope":
        if not args:
            raise OptionError("a polytrope needs its index, as in polytrope:3")
        profile = function(args[0], **kwargs)
    else:
        profile = function(**kwargs)
    profile.meta["spec"] = str(spec)
    return profile
