"""Progress-bar options shared by the samplers."""
from __future__ import annotations

__all__ = ["bar_options"]


def bar_options(progress, default_label: str):
    """Label and line of a tqdm bar from a sampler's ``progress`` argument.

    Parameters
    ----------
    progress : bool or dict
        ``True``/``False``, or ``{"label": str, "position": int}``.
    default_label : str

    Returns
    -------
    (str, int or None)
    """
    if isinstance(progress, dict):
        return (f"{progress.get('label', '')} {default_label}".strip(),
                progress.get("position"))
    return default_label, None
