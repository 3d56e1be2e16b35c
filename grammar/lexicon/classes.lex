# Class words beyond the canonical names in classes.toml.
# Canonical names and every singular synonym get a regular English plural unless an explicit plural
# entry exists or the word is marked `mass` or `plural` (plural-only).
#   phrase -> class NAME            a singular synonym
#   phrase -> class NAME plural SINGULAR   the plural of SINGULAR (irregular forms)
#   phrase -> class NAME plural     a plural-only word (no singular)
#   phrase -> class NAME mass       a mass noun: no plural, agrees as singular
#   phrase -> class NAME whole      a plural-only word naming one thing ("the stairs": one staircase)

# Irregular plurals of canonical names.
shelves -> class shelf plural shelf
people -> class person plural person
clothes -> class clothes whole
stairs -> class stairs whole

# Synonyms.
floorboards -> class floor plural
ceiling light -> class lamp
doorway -> class door
staircase -> class stairs
steps -> class stairs whole
carpet -> class rug
mat -> class rug
dining table -> class table
coffee table -> class table
bedside table -> class table
side table -> class table
bedside cabinet -> class cabinet
armchair -> class chair
stool -> class chair
couch -> class sofa
settee -> class sofa
cupboard -> class cabinet
wardrobe -> class cabinet
drawer unit -> class cabinet
chest of drawers -> class cabinet
chests of drawers -> class cabinet plural chest of drawers
bookshelf -> class shelf
bookshelves -> class shelf plural bookshelf
bookcase -> class shelf
worktop -> class counter
countertop -> class counter
basin -> class sink
washbasin -> class sink
wash basin -> class sink
hand basin -> class sink
washbowl -> class sink
refrigerator -> class fridge
cooker -> class stove
oven -> class stove
hob -> class stove
television -> class tv
telly -> class tv
tellies -> class tv plural telly
light -> class lamp
cup -> class mug
dish -> class plate
notebook -> class book
computer -> class laptop
remote control -> class remote
controller -> class remote
carton -> class box
crate -> class box
backpack -> class bag
handbag -> class bag
rucksack -> class bag
boot -> class shoe
trainer -> class shoe
slipper -> class shoe
clothing -> class clothes mass
laundry -> class clothes mass
coat -> class clothes
jacket -> class clothes
jumper -> class clothes
shirt -> class clothes
cushion -> class pillow
duvet -> class blanket
throw -> class blanket
houseplant -> class plant
teddy -> class toy
teddies -> class toy plural teddy
hand towel -> class towel
man -> class person
men -> class person plural man
woman -> class person
women -> class person plural woman
child -> class person
children -> class person plural child
kid -> class person
puppy -> class dog
# Household members named by their relation to the speaker.
husband -> class person
wife -> class person
wives -> class person plural wife
partner -> class person
grandad -> class person
grandpa -> class person
grandma -> class person
granny -> class person
grandmother -> class person
grandfather -> class person
daughter -> class person
son -> class person
brother -> class person
sister -> class person
lodger -> class person
flatmate -> class person
roommate -> class person
mum -> class person
mom -> class person
dad -> class person
baby -> class person
babies -> class person plural baby
toddler -> class person
someone -> class person
somebody -> class person
puppies -> class dog plural puppy
kitten -> class cat
kitty -> class cat
kitties -> class cat plural kitty

# Compound names whose first word alone is no class word (or another class): the whole phrase names one
# thing, so "floor lamp" is a lamp, not a floor and a lamp.
cardboard box -> class box
cardboard boxes -> class box plural cardboard box
tea towel -> class towel
bath towel -> class towel
water bottle -> class bottle
teddy bear -> class toy
coffee mug -> class mug
coffee cup -> class mug
floor lamp -> class lamp
table lamp -> class lamp
desk lamp -> class lamp
office chair -> class chair
dining chair -> class chair
kitchen counter -> class counter
back door -> class door
front door -> class door

# "The washing" is clothes; a washing machine or basket is not.
washing = laundry when after the|of|some|my|your|our|clean|dirty|wet|folded unless before machine|machines|basket|baskets|line|up

# More everyday names for the classes (common English usage, from memory).
fern -> class plant
greyhound -> class dog
bedside lamp -> class lamp
bedside light -> class lamp
