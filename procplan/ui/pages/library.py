"""The library page as a script of its own address (the frame in procplan.ui.main draws the caution).

Streamlit runs it as __main__; importing it (doctest collection) does nothing.
"""

from procplan.ui import page_library

if __name__ == "__main__":
    page_library.render()
