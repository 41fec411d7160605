% problem: Pelletier 53
% source: F. J. Pelletier, "Seventy-five problems for testing automatic theorem provers", Journal of Automated Reasoning 2, 1986
% written from memory: yes, not copied from the paper; the symbol names are ours
% expected status: Theorem
% kind: with equality
% note: checked by hand: in a two-element domain, exactly one row of the relation has
%   exactly one entry iff the number of entries is odd iff exactly one column does

fof(h1, axiom,
    ? [X, Y] : (X != Y & (! [Z] : (Z = X | Z = Y)))).

fof(pel53_goal, conjecture,
    (? [Z] : ! [X] : ((? [W] : ! [Y] : (f(X, Y) <=> Y = W)) <=> X = Z)) <=> (? [W] : ! [Y] : ((? [Z] : ! [X] : (f(X, Y) <=> X = Z)) <=> Y = W))).
