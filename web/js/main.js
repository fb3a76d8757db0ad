// Loaded last: every panel script has registered itself by now.
"use strict";
NMR.start();
