"""Every component id of the dashboard, in one place.

Pattern-matching ids are built by the small functions at the end.
"""

# Per-user state (dcc.Store, kept in the browser)
BASE_STORE = "base-scenario"          # scenario loaded from the demo or an upload (JSON dict)
CURRENT_STORE = "current-scenario"    # last valid scenario built from the base + the controls
PINS_STORE = "pinned-cases"           # list of pinned cases: {"key", "label", "scenario", "summary"}
SAVED_STORE = "saved-session"         # sessionStorage copy {"current", "pins"}: survives a page reload
RESTORE_GATE = "restore-gate"         # set once per page load by a clientside gate
RESTORED_STORE = "restored"           # True once the saved session has been read back on this load
DEMO_BUTTON = "back-to-demo"          # start again from the demo scenario

# Inputs
PROFILE_PVI = "profile-pvi"           # slider: PVI of the saturation profile
RELPERM_NOTE = "relperm-note"
COREY_BUTTON = "back-to-corey"
OIL_VISCOSITY_NOTE = "oil-viscosity-note"
GENERAL_MESSAGE = "general-message"

# Summary cards
CARDS = "summary-cards"

# Figures
FIG_FRACTIONAL_FLOW = "fig-fractional-flow"
FIG_PROFILE = "fig-profile"
FIG_RECOVERY = "fig-recovery"
FIG_RATE_CUT = "fig-rate-cut"
FIG_WOR = "fig-wor"
FIG_LAYER_FRONTS = "fig-layer-fronts"
FIG_LAYER_COVERAGE = "fig-layer-coverage"
LAYER_SECTION = "layer-section"
VIEW_TABS = "view-tabs"
LAYER_METHOD = "layer-method"
LAYER_NOTE = "layer-note"
LAYER_VARIATION_BUTTON = "layer-variation"

MAIN_FIGURES = (FIG_FRACTIONAL_FLOW, FIG_PROFILE, FIG_RECOVERY, FIG_RATE_CUT, FIG_WOR)

# Uploads
UPLOAD_SCENARIO = "upload-scenario"
UPLOAD_RELPERM = "upload-relperm"
UPLOAD_LAYERS = "upload-layers"
UPLOAD_MESSAGE_SCENARIO = "upload-scenario-message"
UPLOAD_MESSAGE_RELPERM = "upload-relperm-message"
UPLOAD_MESSAGE_LAYERS = "upload-layers-message"

# Downloads
DOWNLOAD = "download"
DOWNLOAD_CSV = "download-csv"
DOWNLOAD_XLSX = "download-xlsx"
DOWNLOAD_JSON = "download-json"

# Compare cases
PIN_BUTTON = "pin-case"
PIN_LABEL = "pin-label"
PIN_MESSAGE = "pin-message"
CASES_TABLE = "cases-table"

# Numerical views (background callbacks)
NUM_RUN = "numerical-run"
NUM_CANCEL = "numerical-cancel"
NUM_PROGRESS = "numerical-progress"
NUM_FIGURE = "fig-numerical"
NUM_MESSAGE = "numerical-message"
SWEEP_RUN = "sweep-run"
SWEEP_CANCEL = "sweep-cancel"
SWEEP_PROGRESS = "sweep-progress"
SWEEP_FIGURE = "fig-sweep"
SWEEP_MESSAGE = "sweep-message"


def slider(name: str) -> str:
    """Id of the slider of control ``name``."""
    return f"{name}-slider"


def box(name: str) -> str:
    """Id of the numeric entry box of control ``name``."""
    return f"{name}-box"


FIELD_MESSAGE_TYPE = "field-message"


def field_message(name: str) -> dict:
    """Pattern-matching id of the inline message under control ``name``."""
    return {"type": FIELD_MESSAGE_TYPE, "field": name}


UNPIN_TYPE = "unpin"


def unpin(key: str) -> dict:
    """Pattern-matching id of the remove button of a pinned case."""
    return {"type": UNPIN_TYPE, "key": key}

# Numerical-check inputs
NUM_CELLS = "numerical-cells"
NUM_ENTRY_PRESSURE = "numerical-entry-pressure"
NUM_PORE_INDEX = "numerical-pore-size-index"
NUM_GRAVITY = "numerical-gravity"
NUM_CURVE_FIGURE = "fig-numerical-curve"
SWEEP_PATTERN = "sweep-pattern"
SWEEP_D_OVER_A = "sweep-d-over-a"
SWEEP_METHOD = "sweep-method"
SWEEP_CELLS = "sweep-cells"
SWEEP_MAP_PVI = "sweep-map-pvi"
SWEEP_CURVE_FIGURE = "fig-sweep-curve"
PATTERN_FORECAST_FIGURE = "fig-pattern-forecast"
