from hard import *
UNK = ['kettle','piano','radiator','toaster','mirror','clock','painting','guitar','candle','basket','printer','fan','umbrella','bicycle','fish tank','dishwasher','washing machine','bathtub','toilet','nightstand','ironing board','vacuum cleaner','speaker','coat rack','laundry basket']
SMALLU = {'kettle','toaster','clock','candle','speaker','printer','basket','fan','umbrella','mirror','laundry basket'}
UNKPL = {'kettle':'kettles','piano':'pianos','radiator':'radiators','toaster':'toasters','mirror':'mirrors','clock':'clocks','painting':'paintings','guitar':'guitars','candle':'candles','basket':'baskets','printer':'printers','fan':'fans','umbrella':'umbrellas','bicycle':'bicycles','fish tank':'fish tanks','dishwasher':'dishwashers','washing machine':'washing machines','bathtub':'bathtubs','toilet':'toilets','nightstand':'nightstands','ironing board':'ironing boards','vacuum cleaner':'vacuum cleaners','speaker':'speakers','coat rack':'coat racks','laundry basket':'laundry baskets'}
def nac():
    v = R.random()
    if v < 0.28:
        s = ch(['mug','plate','bowl','remote','laptop','book','bottle','towel','cat','dog','lamp','vase','shoe','bag','toy','pillow','blanket'])
        l = ch(['table','desk','counter','shelf','sofa','bed','sink','cabinet','fridge'])
        q = ch(["what's on the %s?" % word(l), "is there %s in the %s?" % (A(s), ch(ROOMW[ch(ROOMS)])), "how many %s can you see?" % pword(s), "where is the %s?" % word(s),
                "can you see the %s?" % word(s), "is the %s on the %s?" % (word(s), word(l)), "which room is this?", "what colour is the %s?" % word(s),
                "do you know where the %s went?" % word(s), "what do you think this is?", "are there any %s here?" % pword(s), "is that a %s or a %s?" % (word(s), word(ch(CONFUSE)[1])),
                "how many rooms have you mapped so far?", "what are you looking at right now?", "did you find the %s?" % word(s), "what's under the %s?" % word(ch(['table','bed','sofa','desk'])),
                "why did you call this a %s?" % word(s), "can you tell me what's next to the %s?" % word(l), "is anyone in the %s?" % ch(ROOMW[ch(ROOMS)]), "how sure are you about the %s?" % word(s)])
        if R.random() < 0.3: q = q.rstrip('?')
        if R.random() < 0.4: q = cap(q)
        return q, [], False, 'question'
    if v < 0.52:
        s = ch(['mug','plate','bowl','remote','laptop','book','bottle','towel','shoe','bag','toy','pillow','blanket','box'])
        l = ch(['table','desk','counter','shelf','sofa','bed','sink','cabinet'])
        q = ch(["can you fetch the %s" % word(s), "please bring me the %s" % word(s), "put the %s on the %s" % (word(s), word(l)), "go to the %s" % ch(ROOMW[ch(ROOMS)]),
                "pick up the %s" % word(s), "move the %s next to the %s" % (word(s), word(l)), "could you tidy the %s" % word(l), "take the %s to the %s" % (word(s), ch(ROOMW[ch(ROOMS)])),
                "turn around slowly", "stop there", "wait here a second", "come back to the %s" % ch(ROOMW[ch(ROOMS)]), "look at the %s again" % word(l), "take another picture",
                "put all the %s in the %s" % (pword(s), ch(['box','bag','cabinet','sink'])), "please feed the %s" % ch(['dog','cat']), "follow me", "scan the room again",
                "could you check under the %s" % word(ch(['bed','sofa','table','desk'])), "bring the %s over here" % word(s), "drop the %s in the %s" % (word(s), ch(['box','bag'])), "clear the %s please" % word(l)])
        if R.random() < 0.3: q = q + '?' if q.startswith(('can','could')) else q + ch(['.', ' please.', '!'])
        if R.random() < 0.4: q = cap(q)
        return q, [], False, 'request'
    if v < 0.64:
        q = ch(["thanks", "thank you", "cheers", "great, thanks", "thanks, that's right now", "perfect, thank you", "thanks a lot", "thank you, that looks better", "many thanks",
                "ok thanks", "thanks robot", "ta", "thank you so much", "thanks for fixing that", "brilliant, thanks", "thanks, much better", "thank you, that's all"])
        if R.random() < 0.3: q = q.lower().replace(',', '')
        if R.random() < 0.3: q = cap(q) + ch(['.', '!'])
        return q, [], False, 'thanks'
    if v < 0.78:
        q = ch(["hello", "good morning", "hi there robot", "how are you today", "nice weather today", "I'm home", "let's get started", "okay", "hmm", "never mind", "that looks right",
                "yes that's correct", "looks good to me", "all good", "good job", "well done", "bye for now", "see you later", "you're doing great", "not bad at all", "let me think",
                "hang on", "one moment", "sorry, wrong button", "I'll be back in a minute", "what a mess in here", "good night", "yes", "no worries", "that's fine", "perfect", "alright then",
                "ok let's try again", "oops", "where was I", "right, moving on", "lovely", "exactly", "that's it, you got it"])
        if R.random() < 0.3: q = cap(q) + ch(['.', '!', ''])
        return q, [], False, 'chit_chat'
    if v < 0.97:
        u = ch(UNK); u2 = ch([x for x in UNK if x != u])
        known = ch(['mug','lamp','book','towel','vase','plant','bottle','box','bag','shoe','remote','toy'])
        q = ch(["the %s is on the %s" % (u, ch(['counter','table','shelf','desk']) if u in SMALLU else 'floor'), "there's %s in the corner" % art(u), "there are two %s" % UNKPL[u], "the %s is next to the %s" % (u, u2),
                "there's no %s" % u, "the %s is blue" % u, "the %s is next to the %s" % (word(known), u), "the %s is on the %s" % (word(known), ch(['piano','dishwasher','washing machine','nightstand','radiator'])), "the %s is behind the %s" % (u, word(ch(['door','sofa','tv']))),
                "the %s is under the window" % u, "that's %s" % art(u), "I can see %s" % art(u), "the %s is in the kitchen" % u, "the %s is broken" % u, "there are three %s by the wall" % UNKPL[u],
                "the %s is right of the %s" % (word(known), u), "the %s is inside the %s" % (word(known), ch(['laundry basket','basket','dishwasher','bathtub'])), "the %s is between the %s and the %s" % (u, u2, ch(UNK))])
        if R.random() < 0.4: q = cap(q) + '.'
        return q, [], 'that' in q, 'unparsed'
    return ch(["", "", " ", "   "]), [], False, 'empty'
