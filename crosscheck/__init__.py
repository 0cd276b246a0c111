"""crosscheck: independent derivations of horizon and detector results, compared.

The package is organised in three layers (see DEVELOPERS.md): claim files are
loaded into immutable claim objects (`claimfile`, `expr`, `units`,
`spacetimes`), routes compute observables from a claim's physical inputs
(`routes`), and the runner compares and reports (`compare`, `runner`,
`report`).
"""

__version__ = "0.1.0"
