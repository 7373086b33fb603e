"""Files: reading spectra, heat capacities and volume sets, writing thermodynamic tables.

Spectrum files
--------------
A spectrum file is UTF-8 text (a byte-order mark and Windows line endings are fine)
holding a table of numbers in columns: the first column is the frequency, every
further column a density of states on that frequency grid.

* **Comments.** A line whose first non-blank character is ``#`` is a comment, and so
  is everything after a ``#`` on a data line.  Blank lines are ignored anywhere.
* **Separators.** The first data row decides: a ``;`` in it makes ``;`` the separator,
  else a ``,`` makes ``,`` the separator, else fields are separated by runs of spaces
  and tabs.  Every data row must then have as many fields as the first; with ``,`` or
  ``;`` an empty field is an error.
* **Numbers** use a decimal point: ``12``, ``-0.5``, ``.25``, ``1.5e-3``.  ``nan`` and
  ``inf`` are read but rejected as non-finite values.  Decimal commas (``1,5``) are
  not supported, since a comma also separates fields: a file written with them (with
  ``;`` or tab separators) gives an error that says so rather than being misread.
* **Header.** The first non-comment row is a header when its first field is not a
  number.  Without such a row, the last comment line *directly* above the first data
  row (no blank line between) is read as the header when, after its ``#``, it splits
  into exactly as many fields as the data rows have and its first field is not a
  number; any other comment stays a comment.  Put a blank line between a comment and
  the data to keep it from being read as a header.  A header splits like the data
  (``;``, else ``,``, else a tab, else spaces — it may use a different separator from
  the data), except that with spaces a parenthesised unit stays with its name.
* **Column names** may carry a unit in parentheses or brackets: ``frequency (meV)``,
  ``frequency [THz]``, ``Ga (states/THz)``.  Only the frequency column's unit is used:
  one of K, THz, meV, cm-1 (also ``1/cm``), rad/s.  Names are compared without their
  unit and without regard to case, so a header may not name two columns alike.
  Without a header the columns are called ``frequency``, ``column 1``, ``column 2``…
  (the number is the 0-based column index).
* **Total and partials.** A density column named ``total`` is the total density and
  the others are partial densities.  Without one, a single density column is the
  total; with several, the total is their sum and each is a partial.  ``total=``
  names the total column, or ``total="sum"`` asks for the sum.
* **Atom count.**  A comment line ``# atoms: 2`` (anywhere in the file; the key is
  case-insensitive, the value a positive number) gives the atoms per formula unit; it
  is never read as a header, and a comment header may stand directly above it.
  An ``atoms=`` argument that differs from it is an error naming the line, and so is a
  second such line with another value.  Without it and without ``atoms=``, the count
  comes from the density's integral, 3 modes per atom (:class:`~modeheat.spectrum.Spectrum`
  says when that is clear), else an error asks for ``atoms=``.  Heat-capacity files
  take the same line.
* **The right kind of file.**  A file whose header names its first column as a
  temperature (``T``, ``temp``, ``temperature``, with or without a unit) or gives any
  column a heat-capacity unit (``J/(mol K)``, ``mJ/mol/K``, ``J/g/K`` …) is a
  heat-capacity file: :func:`read_spectrum` refuses it and names
  :func:`read_heat_capacity`, which in turn refuses a file whose first column is named
  as a frequency (``frequency``, ``freq``, ``omega``, ``nu``, ``energy``) or carries a
  frequency unit (THz, meV, cm-1, rad/s), or — when nothing marks it as heat
  capacities — has density columns (``density``, ``dos``, ``total``, ``partial…``).

Negative frequencies are imaginary modes; the spectrum excludes them with a warning
(an error when every frequency is ≤ 0).  Unsorted or repeated frequencies and tiny
negative densities are repaired with a warning; see :class:`~modeheat.spectrum.Spectrum`.
Anything else that does not fit — a missing, binary, UTF-16 or otherwise non-UTF-8
file, no data rows, a row of the wrong length, text where a number belongs, a repeated
column name, an unknown unit — is an :class:`~modeheat.errors.InputError` whose message
names the file and, where one applies, the 1-based line.

An example::

    # Invented spectrum of a two-atom compound
    # atoms: 2
    frequency (THz), total, A, B
    0.0, 0.0, 0.0, 0.0
    0.5, 0.012, 0.008, 0.004   # a trailing comment
    1.0, 0.048, 0.032, 0.016

Heat-capacity files
-------------------
:func:`read_heat_capacity` reads measured heat capacities from files that follow the
same rules, with the columns temperature (K), heat capacity and, optionally, its
standard uncertainty; the heat-capacity unit comes from the header (``C (J/(mol K))``;
a unit may hold one level of parentheses of its own) or from the ``unit=`` argument.
Its docstring lists the units and the basis (per formula unit, per mole of atoms, per
mass).  :func:`modeheat.cp_from_cv` and :func:`modeheat.cv_from_cp` convert between C_p and C_v.

Table files
-----------
:func:`write_table` writes a table from :func:`modeheat.thermo` as comma-separated
values: ``#`` comment lines with the caution, the basis, the units and the source,
then one header row of column names and one row per temperature.  Numbers are written
to 12 significant digits; a missing value (a Debye temperature that does not exist)
is written ``nan``.  The destination must be a new or an existing regular file
(:func:`check_table_destination`).

A table of several sources (``modeheat table A B …``) keeps each source's metadata in
columns, repeated on every row of that source: ``source`` (the file as named) and
``atoms`` (atoms per formula unit) first, then ``T`` … ``theta_D``, then
``zero_point_energy`` (unit of ``U``) and one column for every other single value the
source's table carries in its ``attrs`` (e.g. the low-temperature method and cut-off),
with its unit in the ``# units:`` line where the table gives one.  The comment lines
hold what is common to all sources.  pandas reads it back as it is::

    table = pandas.read_csv("batch.csv", comment="#")
    for source, rows in table.groupby("source", sort=False): ...

When some text cell holds a ``#`` (a file name such as ``run#2.txt``), every field is
written in double quotes, so that ``comment="#"`` does not cut the cell short.

Volume-set files
----------------
:func:`read_volume_set` reads the input of the quasi-harmonic calculation
(:func:`modeheat.quasi_harmonic`): a small table naming one spectrum file per volume,
with the static energy at each; :func:`write_volume_set` writes one.  The table is
UTF-8 text with the comment and blank-line rules above; a comment ``# key: value``
with one of the keys ``volume unit`` ("A3" = Å³ per formula unit, the default;
"cm3/mol", "m3/mol"), ``energy unit`` ("eV" per formula unit, the default; "meV",
"Ry", "Ha", "J/mol", "kJ/mol"), ``atoms`` and ``frequency unit`` (both passed on to
every spectrum read) sets a property of the whole set; an optional header row may
give the volume and energy units too (``volume (cm3/mol), energy (kJ/mol), dos
file``).  Each data row holds three fields — the volume, the static energy E₀ and the
spectrum file's name (relative to the table's folder, or absolute) — separated as the
first data row decides (``;``, else ``,``, else blanks); at least 4 volumes, in
increasing order, each once::

    # INVENTED: quellium at six lattice constants — not a real material
    # volume unit: A3
    # energy unit: eV
    # atoms: 1
    volume, energy, dos file
    15.625, -3.40512, quellium_qh_v1.txt
    16.003, -3.41987, quellium_qh_v2.txt
    ...

Every spectrum file is read by :func:`read_spectrum` and follows the rules above.
Errors name the table and the line (a missing spectrum file, too few or unordered
volumes, spectra for different atom counts among them); a spectrum file's own error
names that file.  :func:`write_volume_set` writes the table and the spectrum files
``<table stem>_v1.txt`` … beside it, numbers with ``repr`` so that they read back
exactly, and refuses to replace any existing file unless ``overwrite=True``.  The
details are in :mod:`~modeheat.io.volume_sets`.

The modules: :mod:`~modeheat.io.columns` (the tokeniser and column parser every reader
shares), :mod:`~modeheat.io.spectrum_files`, :mod:`~modeheat.io.heat_capacity_files`
(with the units of C), :mod:`~modeheat.io.tables` and :mod:`~modeheat.io.volume_sets`.
"""

from __future__ import annotations

from .heat_capacity_files import HEAT_CAPACITY_UNITS, HeatCapacityWarning, read_heat_capacity
from .spectrum_files import read_spectrum
from .tables import check_table_destination, write_table
from .volume_sets import read_volume_set, write_volume_set

__all__ = [
    "read_spectrum",
    "read_heat_capacity",
    "HeatCapacityWarning",
    "HEAT_CAPACITY_UNITS",
    "write_table",
    "check_table_destination",
    "read_volume_set",
    "write_volume_set",
]
