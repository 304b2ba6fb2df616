/** What the top-level eslint.config.js and the boundary test use, resolved inside this package (TypeScript 5). */
export { default as tseslint } from 'typescript-eslint';
export { default as reactHooks } from 'eslint-plugin-react-hooks';
export { ESLint } from 'eslint';
