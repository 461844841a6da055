"""The caution every output carries, in one place (the terminal, JSON, PDF and --help use it).

Light on purpose: the command line reads it before any numerical library is loaded.
"""

CAUTION_SHORT = "a pre-submission self-check, not a certification or an approval"
CAUTION = (f"This is {CAUTION_SHORT}. The governing code, the authority having jurisdiction "
           "and licensed engineering review decide.")
ILLUSTRATIVE_NOTE = ("The limit set used is ILLUSTRATIVE (invented example values, not from any "
                     "standard); results against it say nothing about compliance.")
