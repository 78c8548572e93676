"""procplan in the browser: `streamlit run app.py`."""

from procplan.ui.main import main

main()
