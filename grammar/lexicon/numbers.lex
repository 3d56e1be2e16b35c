# Number words. `number N` is a whole word; `tens N` combines with a following unit word
# ("twenty one", "forty-two"). Digits are read directly. Phrases that name a quantity without being
# number words ("a couple of", "a dozen", "several") are in quantities.lex.
zero -> number 0
one -> number 1
two -> number 2
three -> number 3
four -> number 4
five -> number 5
six -> number 6
seven -> number 7
eight -> number 8
nine -> number 9
ten -> number 10
eleven -> number 11
twelve -> number 12
thirteen -> number 13
fourteen -> number 14
fifteen -> number 15
sixteen -> number 16
seventeen -> number 17
eighteen -> number 18
nineteen -> number 19
twenty -> tens 20
thirty -> tens 30
forty -> tens 40
fifty -> tens 50
sixty -> tens 60
seventy -> tens 70
eighty -> tens 80
ninety -> tens 90
