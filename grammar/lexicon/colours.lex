# Colour words, each mapped to one of the eleven basic colour terms.
# Words that are also CSS Color Module Level 4 named colours are checked against that table
# (tests/fixtures/language/make_colours.py). The eleven basic terms map to themselves; words whose CSS value
# lies nearest another term follow the check (chocolate -> orange, violet -> pink); words whose nearest term
# an operator would not mean (turquoise, teal, tan, silver, lavender) are left out.
black -> colour black
white -> colour white
red -> colour red
green -> colour green
yellow -> colour yellow
blue -> colour blue
brown -> colour brown
purple -> colour purple
pink -> colour pink
orange -> colour orange
grey -> colour grey
gray -> colour grey
navy -> colour blue
crimson -> colour red
maroon -> colour red
scarlet -> colour red
olive -> colour green
lime -> colour green
gold -> colour yellow
chocolate -> colour orange
beige -> colour white
ivory -> colour white
charcoal -> colour grey
violet -> colour pink
magenta -> colour purple
salmon -> colour pink
coral -> colour orange
cream -> colour white
