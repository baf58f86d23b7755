"""Response ladders: positions between the limits at the fine step, and the staircase's defaults."""

import numpy as np
import pytest

from stimlab.errors import InputError
from stimlab.experiment.compile import compile_protocol
from stimlab.experiment.protocol import validate_protocol
from stimlab.experiment.responses import (
    DEFAULT_MAX_TRIALS,
    DEFAULT_STAIRCASE_RULE,
    DEFAULT_STOP_REVERSALS,
    MAX_LADDER_POSITIONS,
    ladder,
)


def test_a_limit_on_a_decimal_step_is_reached():
    # IEEE 754 double precision: 0.3 / 0.1 = 2.9999999999999996, which must count as 3 whole steps.
    assert 0.3 / 0.1 < 3
    assert ladder(0.0, 0.3, 0.1, "step_fine") == pytest.approx([0.0, 0.1, 0.2, 0.3])
    assert ladder(-0.1, 0.1, 0.05, "step_fine") == pytest.approx(np.linspace(-0.1, 0.1, 5))


def test_too_many_positions_name_the_step_and_the_limit():
    assert ladder(-1, 1, 2 / (MAX_LADDER_POSITIONS - 1), "x").size == MAX_LADDER_POSITIONS
    with pytest.raises(InputError) as caught:
        ladder(-1, 1, 1e-5, "trial[2].response.step_fine")
    assert caught.value.field == "trial[2].response.step_fine"
    assert f"at most {MAX_LADDER_POSITIONS:,}" in caught.value.message


def test_a_staircase_without_a_rule_steps_one_up_two_down(demo, protocol_named):
    protocol = protocol_named("detection_staircase")
    response = next(p["response"] for p in protocol["trial"] if p["phase"] == "respond")
    for key in ("rule", "stop_reversals", "max_trials"):
        del response[key]
    fields = compile_protocol(validate_protocol(protocol), demo).data["conditions"][0]["response"]
    # Levitt (1971), J. Acoust. Soc. Am. 49, 467–477: 1 up / 2 down converges on 70.7 % correct.
    assert fields["rule"] == DEFAULT_STAIRCASE_RULE == {"up": 1, "down": 2}
    assert fields["stop_reversals"] == DEFAULT_STOP_REVERSALS and fields["max_trials"] == DEFAULT_MAX_TRIALS
    fields["rule"]["up"] = 3  # the compiled data holds its own copy
    assert DEFAULT_STAIRCASE_RULE == {"up": 1, "down": 2}
