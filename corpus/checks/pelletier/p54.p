% problem: Pelletier 54, Montague's paradox of grounded classes
% source: F. J. Pelletier, "Seventy-five problems for testing automatic theorem provers", Journal of Automated Reasoning 2, 1986
% written from memory: yes, not copied from the paper; the symbol names are ours
% expected status: Theorem
% kind: with equality
% note: uncertain whether this is Pelletier's exact rendering; checked by hand that it
%   is a theorem (read f(x, u) as x is a member of u: the class of grounded
%   classes is not a member of itself, by its singleton, and then is grounded
%   after all)

fof(singletons, axiom,
    ! [Y] : ? [Z] : ! [X] : (f(X, Z) <=> X = Y)).

fof(pel54_goal, conjecture,
    ~ (? [W] : ! [X] : (f(X, W) <=> (! [U] : (f(X, U) => (? [Y] : (f(Y, U) & ~ (? [Z] : (f(Z, U) & f(Z, Y)))))))))).
