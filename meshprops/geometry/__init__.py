"""Simple closed solids, welding, edge topology and shells, point-in-solid and triangle crossings."""
