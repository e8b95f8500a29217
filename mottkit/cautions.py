"""The catalogue of caution codes that screening results carry.

A caution is a short code in the ``cautions`` column (codes joined by ``;``) and
a readable sentence in ``caution_text``. The sentences are fixed per code, so
a million rows cost one lookup per distinct combination, and the numbers they
refer to stand in the result's own columns.
"""

from __future__ import annotations

import numpy as np
import pandas as pd

__all__ = ["CAUTIONS", "THIN_FILM_BOHR_RADII", "combine_flags"]

#: A film thinner than this many effective Bohr radii is flagged: the donor
#: wavefunction and the screening cloud feel the surfaces, and a 2D criterion
#: would apply instead. Common practice, no source ("a few a_B*").
THIN_FILM_BOHR_RADII = 5.0

CAUTIONS: dict[str, str] = {
    "thin_film": (
        "Film thinner than 5 effective Bohr radii: the bulk criterion does not apply "
        "(confinement, two-dimensional screening)."
    ),
    "eps_temperature": (
        "Host permittivity changes strongly with temperature: ε_r, a_B* and n_c at the "
        "measurement temperature differ from their low-temperature values."
    ),
    "freeze_out": (
        "Not metallic and measured warm (k_BT above a tenth of the donor binding): carriers "
        "may freeze out on cooling, so this density overstates the low-temperature one."
    ),
    "non_degenerate": (
        "Carrier gas non-degenerate (E_F below k_BT): Debye-like screening; the "
        "degenerate-metal picture behind the criterion is stretched."
    ),
    "heavy_holes": (
        "p-type carriers with a heavy mass: a small a_B* and high n_c, and hole bands in "
        "oxides are often flat or polaronic, so the hydrogenic estimate is rough."
    ),
    "host_default": (
        "ε_r and/or m* are host-table defaults that the file did not confirm; the verdict "
        "rests on them."
    ),
    "carrier_type_mismatch": (
        "Measured carrier type differs from the host's usual one: check the Hall sign and "
        "whether the host parameters apply to these carriers."
    ),
    "ioffe_regel": (
        "k_F·ℓ below 1 on the metallic side: strong disorder or compensation; transport "
        "may still be insulating (Ioffe–Regel)."
    ),
    "two_carriers": (
        "The Hall data point to more than one carrier type: a single density is an "
        "average and the verdict is uncertain."
    ),
    "temperature_assumed": "No measurement temperature given: 300 K assumed.",
    "no_uncertainty": (
        "No uncertainty given for the density: the probability reflects only the "
        "scatter of the criterion and of the host parameters."
    ),
    "transport_disagrees": (
        "The ρ(T) verdict for this film disagrees with the density criterion."
    ),
    "excluded": "Excluded by annotation.",
    # codes the reader attaches (mottkit.read_measurements); their row-specific sentences
    # with the numbers are in caution_text
    "density_mismatch": "Redundant density columns disagree by more than 10 %; the first is used.",
    "resistivity_mismatch": (
        "Resistivity and sheet resistance × thickness disagree by more than 10 %; the first is used."
    ),
    "mobility_mismatch": "The given mobility differs from 1/(e n ρ) by more than 10 %.",
    "hall_single_carrier": (
        "Density from the Hall coefficient as 1/(e|R_H|): exact for one carrier type only."
    ),
    "dead_layer_not_applied": "A dead layer is given but the density is a volume value, used as is.",
    "thickness_missing": "A sheet quantity without a thickness: no volume value can be derived.",
    "no_density": "No carrier density given or derivable: the row cannot be screened.",
}


def combine_flags(
    flags: dict[str, np.ndarray],
    size: int,
    *,
    prefix_codes=None,
    prefix_text=None,
) -> tuple[pd.Categorical, pd.Categorical]:
    """Caution codes and sentences per row from boolean flags, vectorised.

    Parameters
    ----------
    flags : dict of str to ndarray of bool
        Code → per-row mask, in the order the codes should appear.
    size : int
        Number of rows [-].
    prefix_codes, prefix_text : array_like of str, optional
        Codes and sentences already attached to each row (e.g. by the reader),
        placed before the new ones.

    Returns
    -------
    codes, text : pandas.Categorical
        ';'-joined codes and space-joined sentences per row ('' where none).
        Built from one bit mask per row, so the cost of the strings is one per
        distinct combination, not one per row.
    """
    names = list(flags)
    mask = np.zeros(size, dtype=np.int64)
    for bit, code in enumerate(names):
        mask |= np.asarray(flags[code], dtype=bool).astype(np.int64) << bit
    if prefix_codes is None:
        prefix_id = np.zeros(size, dtype=np.int64)
        prefix_codes_u = np.array([""], dtype=object)
        prefix_text_u = np.array([""], dtype=object)
    else:
        c_id, c_u = pd.factorize(pd.Series(prefix_codes, dtype=object).fillna(""))
        t_src = prefix_text if prefix_text is not None else np.full(size, "", dtype=object)
        t_id, t_u = pd.factorize(pd.Series(t_src, dtype=object).fillna(""))
        prefix_id, pair_u = pd.factorize(c_id.astype(np.int64) * (len(t_u) + 1) + t_id)
        prefix_codes_u = np.asarray(c_u, dtype=object)[pair_u // (len(t_u) + 1)]
        prefix_text_u = np.asarray(t_u, dtype=object)[pair_u % (len(t_u) + 1)]
    key = prefix_id * (1 << len(names)) + mask
    uniq_keys, inverse = np.unique(key, return_inverse=True)
    code_strings, text_strings = [], []
    for k in uniq_keys:
        pid, bits = divmod(int(k), 1 << len(names))
        chosen = [c for b, c in enumerate(names) if bits >> b & 1]
        code_strings.append(";".join(filter(None, [prefix_codes_u[pid], *chosen])))
        text_strings.append(
            " ".join(filter(None, [prefix_text_u[pid], *(CAUTIONS.get(c, c) for c in chosen)]))
        )
    return (
        _categorical(inverse, code_strings),
        _categorical(inverse, text_strings),
    )


def _categorical(codes: np.ndarray, values: list[str]) -> pd.Categorical:
    """Categorical from per-row indices into ``values`` (which may repeat)."""
    cats, remap = np.unique(np.asarray(values, dtype=object).astype(str), return_inverse=True)
    return pd.Categorical.from_codes(remap[codes], categories=list(cats))
