"""Unit constants of the oil-field (US customary) unit system used throughout flood.

flood works internally in field units: length ft, area acre (reservoir) or ft² (flow
cross-section), volume bbl (rb at reservoir conditions, STB at stock-tank conditions), time day,
permeability md, viscosity cp, pressure psi. Conversions live only here and at the input/output edges.

References
----------
Lyons, W.C. (ed.), 1996. Standard Handbook of Petroleum & Natural Gas Engineering, Vol. 2, Gulf,
Ch. 5 (7,758 bbl/acre-ft). Fanchi, J.R., Principles of Applied Reservoir Simulation, 2nd ed.,
Eq. 3.24 (0.001127 and 0.433 in the field-unit fractional-flow equation).
"""

from __future__ import annotations

#: Barrels per acre-foot, as used in the trade (43,560 ft²/acre / 5.614583 ft³/bbl = 7758.37).
BBL_PER_ACRE_FT = 7758.0

#: Square feet per acre (exact).
FT2_PER_ACRE = 43560.0

#: Darcy's-law constant in field units: q [rb/d] = 0.001127 k [md] A [ft²] Δp [psi] / (μ [cp] L [ft]).
DARCY_FIELD = 0.001127

#: Hydrostatic gradient of fresh water, psi/ft per unit specific gravity (62.4 lbm/ft³ / 144 in²/ft²).
PSI_PER_FT_WATER = 0.433
