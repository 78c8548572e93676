"""The app's recompute timing for the benchmark (``python -m procplan.bench`` runs this module in its own
interpreter, so the package below the app never imports streamlit): the median seconds of ``repeats``
changes of the air temperature on the Process page (roulade plan) under AppTest, with the solver's exact
solves on (argument "present") or off ("before").

Usage: ``python -m procplan.ui.bench_app APP_FILE REPEATS present|before``; prints "seconds label".
"""

from __future__ import annotations

import statistics
import sys
import time


def main(argv: list[str]) -> None:
    import procplan.conduction.fv_linear as fv_linear

    app_file, repeats, setting = argv[0], int(argv[1]), argv[2]
    fv_linear.EXACT_SOLVES = setting == "present"
    from streamlit.testing.v1 import AppTest

    from procplan.ui.main import PAGES

    at = AppTest.from_file(app_file, default_timeout=300)
    at.run()
    at.switch_page("procplan/ui/pages/" + next(p for t, p, *_ in PAGES if t == "Process")).run()
    boxes = [w for w in at.number_input if w.label.startswith("Air temperature")]
    if not boxes:
        print("nan no-input")
        return
    times = []
    base = float(boxes[0].value)
    for j in range(repeats):  # a new value each time (a value seen before would come from the cache)
        t0 = time.perf_counter()
        boxes[0].set_value(base - 0.5 * (j + 1)).run()
        times.append(time.perf_counter() - t0)
    print(statistics.median(times), repr(boxes[0].label))


if __name__ == "__main__":
    main(sys.argv[1:])
