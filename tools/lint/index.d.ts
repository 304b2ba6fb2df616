export { default as tseslint } from 'typescript-eslint';
export { default as reactHooks } from 'eslint-plugin-react-hooks';
export { ESLint } from 'eslint';
