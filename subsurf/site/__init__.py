"""A georeferenced site: survey files, grids and CRS, soil on the grid, feasibility maps.

Owns everything spatial, from a survey file to maps in memory, regional chunked runs included.
"""
