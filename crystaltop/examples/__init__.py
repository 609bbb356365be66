"""Published example models (see :mod:`crystaltop.examples.published`)."""

from .published import *  # noqa: F403
from .published import __all__  # noqa: F401
