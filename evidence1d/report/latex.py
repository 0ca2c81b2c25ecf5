"""``tables.tex``: the comparison and parameter tables as LaTeX tabulars (booktabs).

The file is a fragment to ``\\input`` into a paper (it needs ``\\usepackage{booktabs}``);
text is escaped for LaTeX, the Greek letters and symbols of units and names are written as
LaTeX commands, and units stand in the headers or beside each parameter.

References
----------
.. [1] S. Fear, "Publication quality tables in LaTeX", booktabs package documentation
   (CTAN, 2020): \\toprule, \\midrule, \\bottomrule.
.. [2] L. Lamport, *LaTeX: A Document Preparation System*, 2nd ed. (Addison-Wesley, 1994),
   §3.2 and Table 3.1: special characters and their commands.
"""
from __future__ import annotations

from .summary import round_interval

__all__ = ["latex_escape", "latex_unit", "render_tables", "EXTRA_SYMBOLS"]

_SPECIAL = {"\\": r"\textbackslash{}", "&": r"\&", "%": r"\%", "$": r"\$", "#": r"\#",
            "_": r"\_", "{": r"\{", "}": r"\}", "~": r"\textasciitilde{}",
            "^": r"\textasciicircum{}", "<": r"\textless{}", ">": r"\textgreater{}"}
_UNICODE = {"Δ": r"$\Delta$", "Γ": r"$\Gamma$", "α": r"$\alpha$", "β": r"$\beta$",
            "γ": r"$\gamma$", "δ": r"$\delta$", "θ": r"$\theta$", "κ": r"$\kappa$",
            "μ": r"$\mu$", "ν": r"$\nu$", "ξ": r"$\xi$", "π": r"$\pi$", "σ": r"$\sigma$",
            "τ": r"$\tau$", "φ": r"$\phi$", "χ": r"$\chi$", "ω": r"$\omega$",
            "Å": r"\AA{}", "·": r"$\cdot$", "±": r"$\pm$", "−": r"$-$", "–": "--", "—": "---",
            "≤": r"$\leq$", "≥": r"$\geq$", "≈": r"$\approx$", "→": r"$\to$",
            "⊥": r"$\perp$", "∥": r"$\parallel$", "∞": r"$\infty$", "×": r"$\times$",
            "²": r"$^{2}$", "³": r"$^{3}$", "⁴": r"$^{4}$", "⁻": r"$^{-}$", "¹": r"$^{1}$",
            "₀": r"$_{0}$", "…": r"\ldots{}", "’": "'", "‘": "`", "“": "``", "”": "''",
            "é": r"\'e", "è": r"\`e", "ü": r'\"u', "ö": r'\"o', "ä": r'\"a', "É": r"\'E"}

#: LaTeX symbols of the sample-level extra parameters (the model cards give the others)
EXTRA_SYMBOLS = {"chi0": r"$\chi_0$", "c_imp": r"$C_\mathrm{imp}$", "gamma_e": r"$\gamma_e$",
                 "beta_lattice": r"$\beta$"}


def latex_escape(text) -> str:
    """Text safe for LaTeX: special characters escaped, known Unicode symbols as commands.

    Characters outside ASCII without a known command are replaced by ``?`` so that the
    fragment always compiles with pdflatex.

    Parameters
    ----------
    text : object
        Converted with ``str``.

    Returns
    -------
    str

    References
    ----------
    .. [1] Lamport, *LaTeX* (1994), §3.2: the ten special characters.
    """
    out = []
    for ch in str(text):
        if ch in _SPECIAL:
            out.append(_SPECIAL[ch])
        elif ch in _UNICODE:
            out.append(_UNICODE[ch])
        elif ord(ch) < 128:
            out.append(ch)
        else:
            out.append("?")
    return "".join(out)


def latex_unit(unit: str) -> str:
    """A unit string as LaTeX: ``"1"`` and ``""`` give ``""``; ``^n`` becomes a superscript.

    References
    ----------
    .. [1] BIPM, *The International System of Units*, 9th ed. (2019), §5.4: writing units.
    """
    if unit in ("", "1", None):
        return ""
    parts, i, s = [], 0, str(unit)
    while i < len(s):
        if s[i] == "^":
            j = i + 1
            while j < len(s) and (s[j].isdigit() or s[j] == "-"):
                j += 1
            parts.append(f"$^{{{s[i + 1:j]}}}$")
            i = j
        else:
            parts.append(latex_escape(s[i]))
            i += 1
    return "".join(parts)


def _symbol(name: str, latex: dict) -> str:
    if latex.get(name):
        return latex[name]
    if name in EXTRA_SYMBOLS:
        return EXTRA_SYMBOLS[name]
    if ":" in name:
        ds, what = name.split(":", 1)
        return rf"\texttt{{{latex_escape(ds)}}}: {latex_escape(what)}"
    return rf"\texttt{{{latex_escape(name)}}}"


def _pm(v, e) -> str:
    """``$v \\pm e$`` (just ``$v$`` when the error is not finite, written as null)."""
    return f"${v:.2f} \\pm {e:.2f}$" if e is not None else f"${v:.2f}$"


def _tabular(spec: str, header: list, rows: list, caption: str) -> list:
    out = [f"% {caption}", rf"\begin{{tabular}}{{{spec}}}", r"\toprule",
           " & ".join(header) + r" \\", r"\midrule"]
    out += [" & ".join(r) + r" \\" for r in rows]
    return out + [r"\bottomrule", r"\end{tabular}", ""]


def render_tables(summary: dict, context: dict) -> str:
    """The text of tables.tex.

    Parameters
    ----------
    summary : dict
        From :func:`~evidence1d.report.summary.build_summary`.
    context : dict
        From :func:`~evidence1d.report.markdown.report_context` (LaTeX symbols of the
        model cards).

    Returns
    -------
    str
        The families' ln Z and probabilities, the ln K of every pair, the goodness of fit,
        the evidence budget (when computed) and one parameter table per family.

    References
    ----------
    .. [1] booktabs documentation (CTAN); Kass & Raftery, JASA 90, 773 (1995).
    """
    s, c = summary, summary["comparison"]
    out = ["% tables.tex written by evidence1d; needs \\usepackage{booktabs} (and "
           "\\usepackage[T1]{fontenc} for accented names)", ""]
    if not s["reliable"]:
        why = "; ".join(c["reliability"].get("reasons") or ["see report.md"])
        out += ["% UNRELIABLE verdict: " + latex_escape(why).replace("\n", " ")
                + "; do not publish these numbers", ""]
    for w in c["winner_fit_warnings"]:
        out += ["% BAD FIT: " + latex_escape(w), ""]
    best = max(m["log_evidence"] for m in s["models"].values())
    rows = []
    for n, m in s["models"].items():
        rows.append([latex_escape(n), "yes" if m["one_dimensional"] else "no",
                     f"${m['log_evidence']:.2f} \\pm {m['log_evidence_err']:.2f}$",
                     f"${m['log_evidence'] - best:.2f}$",
                     f"${c['model_probabilities'][n]:.3g}$"])
    out += _tabular("llrrr", ["Family", "1D", r"$\ln Z$ (nats)",
                              r"$\ln Z - \ln Z_\mathrm{best}$ (nats)",
                              r"$P(\mathcal{M}\,|\,D)$"], rows,
                    "model comparison: " + latex_escape(c["prior_odds"]) + "; P(1D | data) = "
                    + f"{c['p_one_dimensional']:.3g}")
    rows = [[latex_escape(p["a"]), latex_escape(p["b"]),
             f"${p['ln_k']:.2f} \\pm {p['ln_k_err']:.2f}$", f"${p['two_ln_k']:.1f}$",
             latex_escape(p["wording"])] for p in c["pairs"]]
    out += _tabular("llrrl", ["Family $a$", "Family $b$", r"$\ln K_{ab}$ (nats)",
                              r"$2\ln K_{ab}$", "Kass--Raftery wording"], rows,
                    "Bayes factors of every pair")
    rows = []
    for n, m in s["models"].items():
        for d, f in m["goodness_of_fit"].items():
            rows.append([latex_escape(n), latex_escape(d), str(f["n_points"]),
                         "---" if f["chi2_per_point"] is None else f"${f['chi2_per_point']:.2f}$",
                         f"${f['chi2_per_point_limit']:.2f}$",
                         f"${f['p_value']:.2g}$", "bad" if f["bad_fit"] else "ok"])
    out += _tabular("llrrrrl", ["Family", "Dataset", "$N$", r"$\chi^2/N$",
                                r"bad above", "$p$", "Fit"], rows,
                    "goodness of fit: chi2 per point at the posterior median and the "
                    "posterior-predictive p-value (Gelman, Meng & Stern 1996)")
    b = c["evidence_budget"]
    if b is not None:
        loo = {r["dataset"]: r for r in b["leave_one_out"]}
        rows = [[latex_escape(r["dataset"]), _pm(r["ln_k"], r["ln_k_err"]),
                 _pm(loo[r["dataset"]]["added_last"], loo[r["dataset"]]["added_last_err"])]
                for r in b["sequential"]]
        out += _tabular("lrr", ["Dataset", r"$\Delta\ln K$ in sequence (nats)",
                                r"$\Delta\ln K$ added last (nats)"], rows,
                        "evidence budget of " + " vs ".join(latex_escape(x)
                                                            for x in b["families"]))
    for n, m in s["models"].items():
        latex = context["cards"][n]["latex"]
        rows = []
        for p, v in m["parameters"].items():
            med, plus, minus, exp = round_interval(v["median"], v["q16"], v["q84"])
            unit = latex_unit(v["unit"])
            value = f"{med}^{{+{plus}}}_{{-{minus}}}"
            if exp:
                value = f"({value})\\times 10^{{{exp}}}"
            rows.append([_symbol(p, latex) + (f" ({unit})" if unit else ""), f"${value}$",
                         latex_escape(v["prior"])])
        out += _tabular("lrl", ["Parameter (unit)", "Median, 68\\,\\% interval", "Prior"],
                        rows, f"parameters of {latex_escape(m['title'])} ({latex_escape(n)})")
    return "\n".join(out)
