"""phaseplan: circadian light and sleep planning from published human models.

The public API::

    from planner import load_model, entrain, phase_response_curve
    model = load_model("jewett1999")             # the default model (phaseplan models validate)
    steady = entrain(model)                      # habitual 23:00-07:00 day
    prc = phase_response_curve(model, duration_h=6.7, lux=10_000, background_lux=10)
"""

from planner._version import __version__
from planner.engine.entrainment import (
                                 DEFAULT_DAY,
                                 DailyPattern,
                                 EntrainmentResult,
                                 FreeRunResult,
                                 entrain,
                                 free_running_period,
)
from planner.engine.integrate import SimulationResult, integrate, simulate
from planner.engine.markers import (
                                 Reentrainment,
                                 cbtmin_times,
                                 daily_markers,
                                 dlmo_times,
                                 phase_at,
                                 phase_difference,
                                 reentrainment,
)
from planner.engine.parameters import ModelSpec, available_models, load_model, read_model_file
from planner.engine.prc import PRCSummary, PulseResponse, phase_response_curve, pulse_shifts, summarise
from planner.errors import (
                                 ComputationError,
                                 InputError,
                                 ModelFileError,
                                 PhaseplanError,
                                 ScheduleError,
                                 UnknownModelError,
)
from planner.tomlfile import InputFileError
from planner.world.light import (
                                 GridLight,
                                 LightLayer,
                                 LightSchedule,
                                 ambient,
                                 dark_glasses,
                                 light_box,
                                 sample_on_grid,
                                 sleep,
)

__all__ = [
    "__version__", "DEFAULT_DAY", "DailyPattern", "EntrainmentResult", "FreeRunResult", "entrain",
    "free_running_period", "ComputationError", "InputError", "ModelFileError", "PhaseplanError",
    "ScheduleError", "UnknownModelError", "SimulationResult", "integrate", "simulate", "GridLight",
    "LightLayer", "LightSchedule", "ambient", "dark_glasses", "light_box", "sample_on_grid", "sleep",
    "Reentrainment", "cbtmin_times", "daily_markers", "dlmo_times", "phase_at", "phase_difference",
    "reentrainment", "ModelSpec", "available_models", "load_model", "read_model_file", "PRCSummary",
    "PulseResponse", "phase_response_curve", "pulse_shifts", "summarise", "InputFileError",
]
