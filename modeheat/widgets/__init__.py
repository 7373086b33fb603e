"""Jupyter widgets on top of the backend: thin views that read controls, call one backend
function and assign the result to marks (ipywidgets and bqplot, the ``test``/``lab`` extras)."""

__all__: list[str] = []
