% problem: Pelletier 57
% source: F. J. Pelletier, "Seventy-five problems for testing automatic theorem provers", Journal of Automated Reasoning 2, 1986
% written from memory: yes, not copied from the paper; the symbol names are ours
% expected status: Theorem
% kind: with equality

fof(h1, axiom,
    p(f(a, b), f(b, c))).

fof(h2, axiom,
    p(f(b, c), f(a, c))).

fof(h3, axiom,
    ! [X, Y, Z] : ((p(X, Y) & p(Y, Z)) => p(X, Z))).

fof(pel57_goal, conjecture,
    p(f(a, b), f(a, c))).
