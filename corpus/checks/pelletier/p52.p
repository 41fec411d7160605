% problem: Pelletier 52
% source: F. J. Pelletier, "Seventy-five problems for testing automatic theorem provers", Journal of Automated Reasoning 2, 1986
% written from memory: yes, not copied from the paper; the symbol names are ours
% expected status: Theorem
% kind: with equality

fof(h1, axiom,
    ? [Z, W] : ! [X, Y] : (f(X, Y) <=> (X = Z & Y = W))).

fof(pel52_goal, conjecture,
    ? [W] : ! [Y] : ((? [Z] : ! [X] : (f(X, Y) <=> X = Z)) <=> Y = W)).
