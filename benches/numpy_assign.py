"""The numpy baseline of the assign benchmark: a vectorised matcher as a practitioner
would write it, for the side-by-side run of `cargo bench --bench assign_end_to_end`.

    python3 benches/numpy_assign.py LEVELS.csv LINES.csv OUT.csv

Reads the level table and the line list with pandas, forms every opposite-parity
pair with |ΔJ| ≤ 1 (not 0–0), sorts their wavenumbers, finds each line's candidates
within 3 combined standard uncertainties with numpy.searchsorted (a window as wide
as the largest predicted uncertainty, then each candidate checked against its own),
keeps the best (smallest |Δ|/u_c) per line and writes it with DataFrame.to_csv.
Lines without a candidate are written with empty candidate fields.
"""

import sys

import numpy as np
import pandas as pd

K = 3.0


def j_value(text):
    """J as a number: '2', '3/2'."""
    parts = text.str.split("/", expand=True)
    numerator = parts[0].astype(float)
    if parts.shape[1] > 1:
        denominator = parts[1].fillna("1").astype(float)
        return (numerator / denominator).to_numpy()
    return numerator.to_numpy()


def main(levels_path, lines_path, out_path):
    levels = pd.read_csv(levels_path, comment="#", dtype={"J": str})
    lines = pd.read_csv(lines_path, comment="#")

    j = j_value(levels["J"])
    odd = levels["term"].str.contains("°").to_numpy()
    energy = levels["energy_cm1"].to_numpy()
    u_level = levels["uncertainty_cm1"].to_numpy()
    even_index = np.flatnonzero(~odd)
    odd_index = np.flatnonzero(odd)

    # Every even × odd pair allowed by |ΔJ| ≤ 1, not 0–0.
    je = j[even_index][:, None]
    jo = j[odd_index][None, :]
    allowed = (np.abs(je - jo) <= 1) & ~((je == 0) & (jo == 0))
    ie, io = np.nonzero(allowed)
    a = even_index[ie]
    b = odd_index[io]
    lower = np.where(energy[a] < energy[b], a, b)
    upper = np.where(energy[a] < energy[b], b, a)
    sigma = energy[upper] - energy[lower]
    u_pred = np.hypot(u_level[upper], u_level[lower])
    order = np.argsort(sigma, kind="stable")
    sigma, u_pred, lower, upper = sigma[order], u_pred[order], lower[order], upper[order]

    observed = lines["wavenumber_cm1"].to_numpy()
    u_obs = lines["uncertainty_cm1"].to_numpy()
    half = K * np.sqrt(u_obs**2 + u_pred.max() ** 2)
    start = np.searchsorted(sigma, observed - half, side="left")
    stop = np.searchsorted(sigma, observed + half, side="right")
    counts = stop - start
    line_of = np.repeat(np.arange(len(observed)), counts)
    offsets = np.cumsum(counts) - counts
    candidate = start[line_of] + (np.arange(counts.sum()) - offsets[line_of])
    deviation = observed[line_of] - sigma[candidate]
    u_c = np.sqrt(u_obs[line_of] ** 2 + u_pred[candidate] ** 2)
    within = np.abs(deviation) <= K * u_c
    line_of, candidate = line_of[within], candidate[within]
    deviation, u_c = deviation[within], u_c[within]
    score = np.abs(deviation) / u_c

    # The best per line: sort by (line, score), keep each line's first.
    best = np.lexsort((score, line_of))
    first = np.ones(len(best), dtype=bool)
    first[1:] = line_of[best][1:] != line_of[best][:-1]
    best = best[first]
    chosen = candidate[best]

    result = pd.DataFrame(
        {
            "species": levels["species"].to_numpy()[lower[chosen]],
            "lower_configuration": levels["configuration"].to_numpy()[lower[chosen]],
            "lower_term": levels["term"].to_numpy()[lower[chosen]],
            "lower_J": levels["J"].to_numpy()[lower[chosen]],
            "upper_configuration": levels["configuration"].to_numpy()[upper[chosen]],
            "upper_term": levels["term"].to_numpy()[upper[chosen]],
            "upper_J": levels["J"].to_numpy()[upper[chosen]],
            "predicted_wavenumber_cm1": sigma[chosen],
            "predicted_uncertainty_cm1": u_pred[chosen],
            "deviation_cm1": deviation[best],
            "deviation_sigma": deviation[best] / u_c[best],
        },
        index=line_of[best],
    )
    out = lines.join(result, how="left")
    out.insert(0, "line", np.arange(1, len(out) + 1))
    out.to_csv(out_path, index=False)


if __name__ == "__main__":
    main(*sys.argv[1:4])
