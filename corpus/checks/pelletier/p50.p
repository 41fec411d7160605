% problem: Pelletier 50
% source: F. J. Pelletier, "Seventy-five problems for testing automatic theorem provers", Journal of Automated Reasoning 2, 1986
% written from memory: yes, not copied from the paper; the symbol names are ours
% expected status: Theorem
% kind: with equality

fof(pel50_goal, conjecture,
    (! [X] : (f(a, X) | (! [Y] : f(X, Y)))) => (? [X] : ! [Y] : f(X, Y))).
