"""Colours shared by the canvas, the off-screen picture and the report.

The Okabe-Ito set (Okabe & Ito 2008, "Color Universal Design"), chosen to stay distinct for
the common colour-vision deficiencies; every meaning is also carried by a shape, a line style
or a word, never by colour alone.
"""

BLACK = "#000000"
ORANGE = "#E69F00"
SKY = "#56B4E9"
GREEN = "#009E73"
YELLOW = "#F0E442"
BLUE = "#0072B2"
VERMILLION = "#D55E00"
PURPLE = "#CC79A7"
WALL_FILL = "#4D4D4D"
OBSTACLE_FILL = "#A6A6A6"
