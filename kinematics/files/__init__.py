"""Files: the project and floor-plan models and every way in and out of them.

Owns the models (:mod:`floorplan`, :mod:`project`), their validation (:mod:`validate`),
JSON with line/column errors and atomic writes (:mod:`jsonio`), the DXF and SVG readers,
curve flattening shared by those readers (:mod:`curves`) and :mod:`loader`, which picks a
reader by extension. Readers depend on the models, never the reverse.

May import: :mod:`kinematics.errors` only. Imported by every other part.
"""
