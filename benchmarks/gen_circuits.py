"""The example circuit generators, now shipped as :mod:`thresholdc.examples`.

Kept so the benchmarks and tests that load this file keep working; see that module.
"""

from thresholdc.examples import *  # noqa: F401,F403
from thresholdc.examples import __all__  # noqa: F401
