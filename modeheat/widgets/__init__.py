"""Jupyter widgets on top of the backend: thin views that read controls, call one backend
function and assign the result to marks (ipywidgets and bqplot, the ``test``/``lab`` extras).

:class:`Explorer` is the product's centre: ``Explorer()`` opens an empty state,
``Explorer.demo()`` the invented compound zorbium lumide.
"""

from .explorer import Explorer, ExplorerState
from .status import StatusArea

__all__ = ["Explorer", "ExplorerState", "StatusArea"]
