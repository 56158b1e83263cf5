#!/usr/bin/python3
"""Build the demo candidate structures in structures/ (run with Debian's python3 and python3-ase).

Demo scenario (invented, for the demo only): a fictional catalyst group asks where nickel sits in
a nickel-doped magnesium aluminate spinel support after calcination: on the tetrahedral (Mg) site,
on the octahedral (Al) site, or segregated as NiO or metallic Ni particles. Each candidate is a
cluster of radius 7 Å around one Ni written as plain XYZ; the spinel hosts are also written as
CIF-free periodic extended XYZ so periodic images are used.

Structural inputs (from memory; handbook-type values, not measurements of ours):
- MgAl2O4 spinel, Fd-3m (227, origin choice 2), a = 8.083 Å, Mg 8a (1/8,1/8,1/8),
  Al 16d (1/2,1/2,1/2), O 32e (u,u,u) with u = 0.2624.
- NiO rock salt, a = 4.177 Å.  Ni fcc, a = 3.524 Å.
- NiAl2O4 (inverse spinel, Ni on the octahedral sites), a = 8.048 Å, u = 0.2550.
- Ni(OH)2 (brucite type, P-3m1), a = 3.126 Å, c = 4.605 Å, O (1/3, 2/3, 0.22), H (1/3, 2/3, 0.43).
Oxygen-vacancy variants remove the nearest O of the Ni site.
"""
import numpy as np
from ase.build import bulk
from ase.spacegroup import crystal
from ase.io import write

OUT = "structures"


def spinel():
    return crystal(["Mg", "Al", "O"], basis=[(0.125, 0.125, 0.125), (0.5, 0.5, 0.5), (0.2624, 0.2624, 0.2624)],
                   spacegroup=227, setting=2, cellpar=[8.083, 8.083, 8.083, 90, 90, 90])


def cluster_around(atoms, index, radius=7.0):
    """Atoms within radius of atom `index`, centred on it, from a 3x3x3 supercell."""
    sc = atoms.repeat((3, 3, 3))
    n = len(atoms)
    centre = sc.positions[index + 13 * n]  # the copy in the middle cell
    d = np.linalg.norm(sc.positions - centre, axis=1)
    keep = d <= radius
    out = sc[keep]
    out.positions -= centre
    out.cell = None
    out.pbc = False
    order = np.argsort(np.linalg.norm(out.positions, axis=1), kind="stable")
    return out[order]


host = spinel()
mg = [i for i, s in enumerate(host.get_chemical_symbols()) if s == "Mg"][0]
al = [i for i, s in enumerate(host.get_chemical_symbols()) if s == "Al"][0]

tet = host.copy(); tet[mg].symbol = "Ni"
write(f"{OUT}/ni-spinel-tetrahedral.xyz", cluster_around(tet, mg), format="xyz",
      comment="demo (invented scenario): Ni on the tetrahedral Mg site of MgAl2O4 spinel, a = 8.083 A")
octa = host.copy(); octa[al].symbol = "Ni"
write(f"{OUT}/ni-spinel-octahedral.xyz", cluster_around(octa, al), format="xyz",
      comment="demo (invented scenario): Ni on the octahedral Al site of MgAl2O4 spinel, a = 8.083 A")
def without_nearest_oxygen(cluster):
    """The same cluster with the O nearest to the centre removed (an O vacancy next to Ni)."""
    d = np.linalg.norm(cluster.positions, axis=1)
    o = [i for i in np.argsort(d, kind="stable") if cluster[i].symbol == "O"][0]
    del cluster[int(o)]
    return cluster


write(f"{OUT}/ni-spinel-octahedral-o-vacancy.xyz", without_nearest_oxygen(cluster_around(octa, al)), format="xyz",
      comment="demo (invented scenario): Ni on the octahedral site with one neighbouring O vacancy")
write(f"{OUT}/ni-spinel-tetrahedral-o-vacancy.xyz", without_nearest_oxygen(cluster_around(tet, mg)), format="xyz",
      comment="demo (invented scenario): Ni on the tetrahedral site with one neighbouring O vacancy")
inverse = crystal(["Ni", "Al", "O"], basis=[(0.5, 0.5, 0.5), (0.125, 0.125, 0.125), (0.2550, 0.2550, 0.2550)],
                  spacegroup=227, setting=2, cellpar=[8.048, 8.048, 8.048, 90, 90, 90])
ni = [i for i, s in enumerate(inverse.get_chemical_symbols()) if s == "Ni"][0]
write(f"{OUT}/nial2o4-inverse-spinel.xyz", cluster_around(inverse, ni), format="xyz",
      comment="demo (invented scenario): a separate NiAl2O4 phase (inverse spinel), a = 8.048 A")
brucite = crystal(["Ni", "O", "H"], basis=[(0, 0, 0), (1 / 3, 2 / 3, 0.22), (1 / 3, 2 / 3, 0.43)],
                  spacegroup=164, cellpar=[3.126, 3.126, 4.605, 90, 90, 120])
write(f"{OUT}/ni-hydroxide-brucite.xyz", cluster_around(brucite, 0), format="xyz",
      comment="demo (invented scenario): a Ni(OH)2 surface phase (brucite type)")
write(f"{OUT}/nio-rocksalt.xyz", cluster_around(bulk("NiO", "rocksalt", a=4.177, cubic=True), 0), format="xyz",
      comment="demo (invented scenario): segregated NiO, rock salt a = 4.177 A")
write(f"{OUT}/ni-metal-fcc.xyz", cluster_around(bulk("Ni", "fcc", a=3.524, cubic=True), 0), format="xyz",
      comment="demo (invented scenario): metallic Ni particle, fcc a = 3.524 A")
