% problem: Pelletier 65
% source: F. J. Pelletier, "Seventy-five problems for testing automatic theorem provers", Journal of Automated Reasoning 2, 1986
% written from memory: yes, not copied from the paper; the symbol names are ours
% expected status: Theorem
% kind: with equality
% note: a group in which every element is its own inverse is commutative (common
%   practice)

fof(assoc, axiom,
    ! [X, Y, Z] : f(f(X, Y), Z) = f(X, f(Y, Z))).

fof(left_identity, axiom,
    ! [X] : f(a, X) = X).

fof(pel65_goal, conjecture,
    (! [X] : f(X, X) = a) => (! [X, Y] : f(X, Y) = f(Y, X))).
