"""Old private name of `groundstep.core.methods`, kept until addin imports the public module.

Import from ``groundstep.core.methods``; this module goes once no adapter uses it.
"""

from .methods import MAX_SUBSTEPS, METHODS, Method, resolve_method, substep_counts  # noqa: F401
