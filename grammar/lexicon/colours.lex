# Colour words, each mapped to one of the eleven basic colour terms.
# Words that are also CSS Color Module Level 4 named colours are checked against that table
# (tests/fixtures/language/make_colours.py).
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
turquoise -> colour blue
teal -> colour green
olive -> colour green
lime -> colour green
gold -> colour yellow
tan -> colour brown
chocolate -> colour brown
beige -> colour white
ivory -> colour white
silver -> colour grey
charcoal -> colour grey
violet -> colour purple
lavender -> colour purple
magenta -> colour purple
salmon -> colour pink
coral -> colour orange
cream -> colour white
