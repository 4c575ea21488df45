"""Parameters for each self-contained tool from one random integer, shared by the property tests
(edits undo exactly; the crash journal replays exactly)."""
from editor.processing.gaps import GapParams
from editor.processing.simplify import SimplifyParams
from editor.processing.smoothing import SmoothParams
from editor.processing.spikes import SpikeParams
from editor.processing.stops import StopParams

PARAMS = {
    "smooth": lambda s: SmoothParams(horizontal_strength=float(s % 100), vertical_strength=float((s * 7) % 100)),
    "despike": lambda s: SpikeParams(),
    "fill_gaps": lambda s: GapParams(long_gap="split" if s % 2 else "leave"),
    "collapse_stops": lambda s: StopParams(),
    "simplify": lambda s: SimplifyParams(tolerance_m=1.0 + s % 20),
}
