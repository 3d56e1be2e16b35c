# Words the Juniper Lane flat uses for its own things.
beanbag -> class chair
pouffe -> class chair
bread bin -> class box
